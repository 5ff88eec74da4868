// Package shard splits a run's jobs into deterministic shares, one per
// process of a cluster array job.
//
// Rule: with N shards, job i (0-based, in manifest order) belongs to shard
// (i mod N) + 1. Shards are numbered 1..N. Dealing jobs out round-robin
// balances the work even when a sweep's cost grows along an axis (more
// states, higher persistence), and every shard still sees its jobs in
// increasing order, so a merge is a streaming k-way merge of sorted
// inputs.
//
// On Slurm the shard comes from the array variables: SLURM_ARRAY_TASK_ID,
// SLURM_ARRAY_TASK_MIN, SLURM_ARRAY_TASK_STEP (default 1) and
// SLURM_ARRAY_TASK_COUNT give shard (ID − MIN)/STEP + 1 of COUNT, for any
// array written as a range (--array=0-15, --array=1-31:2, …).
package shard

import (
	"fmt"
	"strconv"
	"strings"
)

// Shard is share Index of Count (1 ≤ Index ≤ Count). The zero value means
// no sharding: every job.
type Shard struct {
	Index, Count int
}

// All is the whole run as one shard.
var All = Shard{Index: 1, Count: 1}

// Whole reports whether s covers every job.
func (s Shard) Whole() bool { return s.Count <= 1 }

// String returns "I/N", the form Parse reads.
func (s Shard) String() string {
	if s.Count == 0 {
		return All.String()
	}
	return strconv.Itoa(s.Index) + "/" + strconv.Itoa(s.Count)
}

// Owns reports whether job i (0-based) belongs to s.
func (s Shard) Owns(i int) bool {
	if s.Whole() {
		return true
	}
	return i%s.Count == s.Index-1
}

// Jobs returns the indices of s's jobs among n, in increasing order.
func (s Shard) Jobs(n int) []int {
	if s.Whole() {
		idx := make([]int, n)
		for i := range idx {
			idx[i] = i
		}
		return idx
	}
	idx := make([]int, 0, n/s.Count+1)
	for i := s.Index - 1; i < n; i += s.Count {
		idx = append(idx, i)
	}
	return idx
}

// Parse reads "I/N" with 1 ≤ I ≤ N.
func Parse(text string) (Shard, error) {
	is, ns, ok := strings.Cut(strings.TrimSpace(text), "/")
	i, err1 := strconv.Atoi(is)
	n, err2 := strconv.Atoi(ns)
	if !ok || err1 != nil || err2 != nil {
		return Shard{}, fmt.Errorf("shard %q: want I/N, for example 2/8", text)
	}
	if n < 1 || i < 1 || i > n {
		return Shard{}, fmt.Errorf("shard %q: want 1 ≤ I ≤ N (shards are numbered from 1)", text)
	}
	return Shard{Index: i, Count: n}, nil
}

// Slurm array variables.
const (
	EnvTaskID    = "SLURM_ARRAY_TASK_ID"
	EnvTaskMin   = "SLURM_ARRAY_TASK_MIN"
	EnvTaskMax   = "SLURM_ARRAY_TASK_MAX"
	EnvTaskStep  = "SLURM_ARRAY_TASK_STEP"
	EnvTaskCount = "SLURM_ARRAY_TASK_COUNT"
)

// FromSlurm derives the shard from Slurm's array variables, read with
// getenv (os.Getenv in production). ok is false outside an array job.
func FromSlurm(getenv func(string) string) (s Shard, ok bool, err error) {
	idText := getenv(EnvTaskID)
	if idText == "" {
		return Shard{}, false, nil
	}
	num := func(name, def string) (int, error) {
		v := getenv(name)
		if v == "" {
			v = def
		}
		if v == "" {
			return 0, fmt.Errorf("%s is set but %s is not; pass --shard I/N", EnvTaskID, name)
		}
		n, err := strconv.Atoi(v)
		if err != nil {
			return 0, fmt.Errorf("%s=%q is not an integer", name, v)
		}
		return n, nil
	}
	id, err := num(EnvTaskID, "")
	if err != nil {
		return Shard{}, true, err
	}
	lo, err := num(EnvTaskMin, "")
	if err != nil {
		return Shard{}, true, err
	}
	count, err := num(EnvTaskCount, "")
	if err != nil {
		return Shard{}, true, err
	}
	step, err := num(EnvTaskStep, "1")
	if err != nil {
		return Shard{}, true, err
	}
	if step < 1 || count < 1 {
		return Shard{}, true, fmt.Errorf("the Slurm array has step %d and %d tasks; pass --shard I/N", step, count)
	}
	if hiText := getenv(EnvTaskMax); hiText != "" {
		hi, err := num(EnvTaskMax, "")
		if err != nil {
			return Shard{}, true, err
		}
		if hi-lo != (count-1)*step {
			return Shard{}, true, fmt.Errorf("the Slurm array %d-%d:%d does not have %d evenly spaced tasks (an index list?); use a range such as --array=0-%d, or pass --shard I/N",
				lo, hi, step, count, count-1)
		}
	}
	if id < lo || (id-lo)%step != 0 || (id-lo)/step >= count {
		return Shard{}, true, fmt.Errorf("the Slurm array task %d is not in %d-%d:%d; pass --shard I/N", id, lo, lo+(count-1)*step, step)
	}
	return Shard{Index: (id-lo)/step + 1, Count: count}, true, nil
}

// Resolve picks the shard of a run: the --shard flag when given (text not
// empty), else Slurm's array variables, else the whole run. The flag value
// "all" (or "1/1") runs every job even inside an array task.
func Resolve(flag string, getenv func(string) string) (Shard, error) {
	if flag != "" {
		if strings.TrimSpace(flag) == "all" {
			return All, nil
		}
		return Parse(flag)
	}
	s, ok, err := FromSlurm(getenv)
	if err != nil || !ok {
		return All, err
	}
	return s, nil
}
