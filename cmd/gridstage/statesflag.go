package main

import (
	"fmt"
	"strconv"
	"strings"

	"github.com/spf13/pflag"

	"gridstage/solver"
)

// statesFlag is --states: a number of grid points, or auto (the smallest
// number that carries the requested moments, up to --states-cap).
type statesFlag struct {
	n    int
	auto bool
	cap  int
}

func (f *statesFlag) String() string {
	if f.auto {
		return "auto"
	}
	return strconv.Itoa(f.n)
}

func (f *statesFlag) Set(v string) error {
	if strings.TrimSpace(v) == "auto" {
		f.auto, f.n = true, 0
		return nil
	}
	n, err := strconv.Atoi(strings.TrimSpace(v))
	if err != nil {
		return fmt.Errorf("want an integer from 2 to %d, or auto", solver.MaxStates)
	}
	f.auto, f.n = false, n
	return nil
}

func (f *statesFlag) Type() string { return "N|auto" }

// register adds --states (default def) and --states-cap.
func (f *statesFlag) register(fs *pflag.FlagSet, def int, help string) {
	f.n = def
	fs.Var(f, "states", help+", or auto: the smallest number whose chain matches the moments in every state holding at least 0.1% of the stationary mass (maxent only)")
	fs.IntVar(&f.cap, "states-cap", solver.AdviceMaxStates, "with --states auto, the largest number of chain states tried")
}

// check validates the flags; perAxis names the unit for messages.
func (f *statesFlag) check(fs *pflag.FlagSet, method solver.Method) error {
	if fs.Changed("states-cap") {
		if !f.auto {
			return badInput("--states-cap applies to --states auto only")
		}
		if err := intRange("states-cap", f.cap, 2, solver.MaxStates); err != nil {
			return err
		}
	}
	if f.auto && method != solver.MaxEnt {
		return badInput("--states auto applies to --method maxent only: %s solves for no moments that a grid must carry", method)
	}
	return nil
}

// entry sets states (and states_cap) in a manifest process entry.
func (f *statesFlag) entry(fs *pflag.FlagSet, e map[string]any) {
	if !f.auto {
		e["states"] = f.n
		return
	}
	e["states"] = "auto"
	if fs.Changed("states-cap") {
		e["states_cap"] = f.cap
	}
}
