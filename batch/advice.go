package batch

import "gridstage/manifests"

// worstJob is a process's job with the most fallback states so far.
type worstJob struct {
	jobs, fallbacks int
	job             manifests.Job
	sol             manifests.Solution
}

// noteWorst counts a fallback job of its process and keeps it if it has
// more fallback states than any before it.
func noteWorst(worst map[string]*worstJob, job manifests.Job, sol manifests.Solution, fallbacks int) {
	w := worst[job.Process]
	if w == nil {
		w = &worstJob{}
		worst[job.Process] = w
	}
	w.jobs++
	if fallbacks > w.fallbacks {
		w.fallbacks, w.job, w.sol = fallbacks, job, sol
	}
}

// adviseWorst computes the grid advice of each process's worst job, in
// manifest order.
func adviseWorst(m *manifests.Manifest, worst map[string]*worstJob) []ProcessAdvice {
	var out []ProcessAdvice
	seen := map[string]bool{}
	for _, j := range m.Jobs {
		w := worst[j.Process]
		if w == nil || seen[j.Process] {
			continue
		}
		seen[j.Process] = true
		a := ProcessAdvice{Process: j.Process, Jobs: w.jobs, Worst: w.job, Fallbacks: w.fallbacks, States: w.sol.States()}
		prob, err := w.job.Build()
		if err != nil {
			a.Text = "no grid advice: " + err.Error()
		} else {
			a.Text = prob.FallbackAdvice(w.sol, 0)
		}
		out = append(out, a)
	}
	return out
}
