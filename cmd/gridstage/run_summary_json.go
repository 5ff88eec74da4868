package main

import (
	"encoding/json"
	"io"
	"log/slog"
	"path/filepath"
	"time"

	"gridstage/batch"
	"gridstage/formats"
	"gridstage/manifests"
)

// runSummary is what `run --log-format json` prints on stdout when the
// run ends: one JSON object on one line, the machine-readable twin of the
// text summary (README, "Logs and summaries for machines").
type runSummary struct {
	Run    string `json:"run"`
	Output string `json:"output"`
	Record string `json:"record"`
	Shard  string `json:"shard"`
	// UpToDate: the folder already held this run's output; nothing was
	// solved or written.
	UpToDate bool    `json:"up_to_date"`
	Jobs     int     `json:"jobs"`
	Solved   int     `json:"solved"`
	Cached   int     `json:"cached"`
	Failed   int     `json:"failed"`
	Seconds  float64 `json:"seconds"`
	// FallbackJobs have states that matched fewer moments than requested;
	// ShortJobs are those among them where such a state holds at least
	// 0.1 % of the stationary mass. Both are left out when the output was
	// up to date (nothing was solved, so nothing was counted).
	FallbackJobs *int               `json:"fallback_jobs,omitempty"`
	ShortJobs    *int               `json:"short_jobs,omitempty"`
	Sets         []runSummarySet    `json:"sets"`
	Advice       []runSummaryAdvice `json:"advice"`
}

type runSummarySet struct {
	Process string   `json:"process"`
	Points  int64    `json:"points"`
	Files   []string `json:"files"`
}

type runSummaryAdvice struct {
	Process string `json:"process"`
	// Jobs whose grid does not carry the moments; the advice is computed
	// for the worst of them.
	Jobs       int                `json:"jobs"`
	WorstPoint int                `json:"worst_point"`
	Params     map[string]float64 `json:"params"`
	FellBack   int                `json:"states_fell_back"`
	States     int                `json:"states"`
	Advice     string             `json:"advice"`
}

func newRunSummary(m *manifests.Manifest, r *batch.Result, took time.Duration) runSummary {
	s := runSummary{Run: m.Run, Output: r.Dir, Record: filepath.Join(r.Dir, batch.RecordFile),
		UpToDate: r.UpToDate, Jobs: r.Jobs, Solved: r.Solved, Cached: r.Cached, Failed: r.Failed,
		Seconds: took.Round(time.Millisecond).Seconds(), Sets: []runSummarySet{}, Advice: []runSummaryAdvice{}}
	if !r.UpToDate {
		s.FallbackJobs, s.ShortJobs = &r.FallbackJobs, &r.ShortJobs
	}
	if r.Record == nil {
		return s
	}
	s.Shard = r.Record.Shard
	// The sets from the run record, which lists them in an up-to-date
	// folder too; files in the record's order, each process's together.
	at := map[string]int{}
	for _, f := range r.Record.Files {
		process, _, _, ok := formats.ParseFileName(f.Path)
		if !ok {
			continue
		}
		k, seen := at[process]
		if !seen {
			k, at[process] = len(s.Sets), len(s.Sets)
			s.Sets = append(s.Sets, runSummarySet{Process: process})
		}
		s.Sets[k].Files = append(s.Sets[k].Files, filepath.Join(r.Dir, f.Path))
		if f.Table == formats.TablePoints {
			s.Sets[k].Points = f.Rows
		}
	}
	for _, a := range r.Advice {
		params := map[string]float64{}
		for _, p := range a.Worst.Params {
			params[p.Name] = p.Value
		}
		s.Advice = append(s.Advice, runSummaryAdvice{Process: a.Process, Jobs: a.Jobs, WorstPoint: a.Worst.Point,
			Params: params, FellBack: a.Fallbacks, States: a.States, Advice: a.Text})
	}
	return s
}

// logRunWarnings writes, as log records, the warnings and notes the text
// summary prints: with --log-format json every line on stderr is JSON.
func logRunWarnings(log *slog.Logger, r *batch.Result) {
	switch {
	case r.UpToDate:
	case r.ShortJobs > 0:
		log.Warn("states holding at least 0.1% of the stationary mass matched fewer moments than requested (proven infeasible there on those grids); gridstage report shows which",
			"jobs", r.ShortJobs, "of", r.Jobs)
		for _, a := range r.Advice {
			args := []any{"process", a.Process, "jobs", a.Jobs, "worst_point", a.Worst.Point}
			for _, p := range a.Worst.Params {
				args = append(args, p.Name, p.Value)
			}
			log.Warn("grid advice", append(args, "states_fell_back", a.Fallbacks, "states", a.States, "advice", a.Text)...)
		}
	case r.FallbackJobs > 0:
		log.Info("some states matched fewer moments than requested (proven infeasible there), each holding less than 0.1% of the stationary mass: the grids carry the moments wherever the chains spend their time",
			"jobs", r.FallbackJobs, "of", r.Jobs)
	}
}

// printRunSummaryJSON writes the summary as one line of JSON.
func printRunSummaryJSON(w io.Writer, m *manifests.Manifest, r *batch.Result, took time.Duration) error {
	b, err := json.Marshal(newRunSummary(m, r, took))
	if err != nil {
		return err
	}
	_, err = w.Write(append(b, '\n'))
	return err
}
