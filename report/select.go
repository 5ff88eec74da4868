package report

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
)

// Selection picks sweep points. The zero value selects every point.
type Selection struct {
	// Point, when HasPoint is set, selects the point with that index.
	Point    int
	HasPoint bool
	// Where selects points whose swept parameters equal these values
	// (all of them; values compare equal within 1e-9 relative, so a value
	// typed as 0.3 finds a point computed as 0.1 × 3).
	Where map[string]float64
}

// Empty reports whether the selection keeps every point.
func (s Selection) Empty() bool { return !s.HasPoint && len(s.Where) == 0 }

// ParseWhere parses "name=value".
func ParseWhere(s string) (name string, value float64, err error) {
	name, text, ok := strings.Cut(s, "=")
	name, text = strings.TrimSpace(name), strings.TrimSpace(text)
	if !ok || name == "" || text == "" {
		return "", 0, fmt.Errorf("--where %q: want name=value, e.g. --where rho=0.9", s)
	}
	value, err = strconv.ParseFloat(text, 64)
	if err != nil || math.IsNaN(value) || math.IsInf(value, 0) {
		return "", 0, fmt.Errorf("--where %q: value %q is not a finite number", s, text)
	}
	return name, value, nil
}

// Select keeps the chosen points of every job, dropping jobs left with
// none. It returns an *InputError naming what exists when nothing matches.
func (r Run) Select(s Selection) (Run, error) {
	if s.Empty() {
		return r, nil
	}
	swept := map[string]bool{}
	for _, j := range r.Jobs {
		for _, p := range j.Params {
			swept[p] = true
		}
	}
	for name := range s.Where {
		if !swept[name] {
			return Run{}, badInput(r.Source, "no job sweeps a parameter named %q (swept: %s)", name, listOrNone(keys(swept)))
		}
	}
	out := r
	out.Jobs = nil
	for _, j := range r.Jobs {
		kept := j
		kept.Points = nil
		for _, p := range j.Points {
			if s.matches(p) {
				kept.Points = append(kept.Points, p)
			}
		}
		if len(kept.Points) > 0 {
			out.Jobs = append(out.Jobs, kept)
		}
	}
	if len(out.Jobs) == 0 {
		return Run{}, badInput(r.Source, "no sweep point matches %s (%s)", s.describe(), r.available(s))
	}
	return out, nil
}

func (s Selection) matches(p Point) bool {
	if s.HasPoint && p.Index != s.Point {
		return false
	}
	for name, want := range s.Where {
		got, ok := p.Params[name]
		if !ok || math.Abs(got-want) > 1e-9*math.Max(1, math.Max(math.Abs(got), math.Abs(want))) {
			return false
		}
	}
	return true
}

func (s Selection) describe() string {
	var parts []string
	if s.HasPoint {
		parts = append(parts, fmt.Sprintf("--point %d", s.Point))
	}
	for _, name := range keys(s.Where) {
		parts = append(parts, fmt.Sprintf("%s=%g", name, s.Where[name]))
	}
	return strings.Join(parts, " and ")
}

// available lists what the run holds, for the error message.
func (r Run) available(s Selection) string {
	var idx []int
	values := map[string]map[float64]bool{}
	for _, j := range r.Jobs {
		for _, p := range j.Points {
			idx = append(idx, p.Index)
			for name, v := range p.Params {
				if _, asked := s.Where[name]; asked {
					if values[name] == nil {
						values[name] = map[float64]bool{}
					}
					values[name][v] = true
				}
			}
		}
	}
	sort.Ints(idx)
	var parts []string
	if len(idx) > 0 {
		parts = append(parts, fmt.Sprintf("points %d to %d exist", idx[0], idx[len(idx)-1]))
	} else {
		parts = append(parts, "the run has no points")
	}
	for _, name := range keys(values) {
		var vs []float64
		for v := range values[name] {
			vs = append(vs, v)
		}
		sort.Float64s(vs)
		text := make([]string, 0, 8)
		for i, v := range vs {
			if i == 8 {
				text = append(text, fmt.Sprintf("… %d values in all", len(vs)))
				break
			}
			text = append(text, strconv.FormatFloat(v, 'g', -1, 64))
		}
		parts = append(parts, fmt.Sprintf("%s takes %s", name, strings.Join(text, ", ")))
	}
	return strings.Join(parts, "; ")
}

func keys[V any](m map[string]V) []string {
	out := make([]string, 0, len(m))
	for k := range m {
		out = append(out, k)
	}
	sort.Strings(out)
	return out
}

func listOrNone(xs []string) string {
	if len(xs) == 0 {
		return "none"
	}
	return strings.Join(xs, ", ")
}
