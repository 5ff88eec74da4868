package report

import (
	"bytes"
	"encoding/base64"
	"fmt"
	"html/template"
	"io"
	"math"
	"sort"

	"gridstage/internal/version"
	"gridstage/report/figures"
	"gridstage/solver"
)

// Options tune a report. The zero value is ready to use.
type Options struct {
	// MaxFigureChains caps how many chains get figures; 0 means 12. Chains
	// judged worst come first, so no troubled chain is hidden by a cap
	// unless more than this many are troubled; every chain still gets a
	// row in its job's table.
	MaxFigureChains int
}

const defaultMaxFigureChains = 12

// Write renders the run as one self-contained HTML page. The run is read
// and never modified; the output is the same bytes for the same run.
func Write(w io.Writer, r Run, opt Options) error {
	p, err := buildPage(r, opt)
	if err != nil {
		return err
	}
	var buf bytes.Buffer
	if err := pageTemplate.Execute(&buf, p); err != nil {
		return fmt.Errorf("report: %w", err)
	}
	_, err = w.Write(buf.Bytes())
	return err
}

// page is what the template shows.
type page struct {
	Run       Run
	Generator string
	Counts    [3]int
	Glance    []glanceItem
	// GlanceMore counts the chains left out of a long at-a-glance list,
	// by verdict level.
	GlanceMore [3]int
	FailedChks []Check
	Jobs       []jobView
	Omitted    int
	Thresholds []string
	// Large is set for runs of more than compactAbove chains: each job
	// leads with its map, then the worst chains in detail, then a table
	// of at most tableRows of its chains, worst first.
	Large bool
}

// compactAbove is the number of chains beyond which the page switches to
// its large-run layout, and tableRows the rows of a job's table there
// (each row is about 700 bytes of HTML: 400 rows keep a job's table near
// 300 kB whatever the sweep's size).
const (
	compactAbove = 200
	tableRows    = 400
)

type glanceItem struct {
	Level  Level
	Label  string
	Anchor string
}

type jobView struct {
	Job    Job
	Rows   []rowView
	Charts []chainView
	// Space holds the panels of the map over the swept parameters (none
	// for a job of one point); SpaceAxes names its axes.
	Space     []template.HTML
	SpaceAxes string
	// RowsLeft counts the job's chains without a row (large runs), by
	// verdict level; RowsLeftTotal is their sum.
	RowsLeft      [3]int
	RowsLeftTotal int
}

type rowView struct {
	Verdict       Verdict
	Point         string
	Anchor        string
	States        int
	Matched       string
	Fallbacks     int
	Worst         [4]string
	Mean, SD, AC  [2]string
	Skew, Kurt    [2]string
	SpecHash      string
	HasFigures    bool
	HasDiagnostic bool
}

type chainView struct {
	Anchor  string
	Title   string
	Verdict Verdict
	Figures []figureView
}

type figureView struct {
	Title, Caption string
	URI            template.URL
}

func buildPage(r Run, opt Options) (page, error) {
	maxCharts := opt.MaxFigureChains
	if maxCharts <= 0 {
		maxCharts = defaultMaxFigureChains
	}
	p := page{Run: r, Generator: version.Tool, Thresholds: thresholdText(), Large: r.Chains() > compactAbove}
	for _, c := range r.Checks {
		if !c.OK {
			p.FailedChks = append(p.FailedChks, c)
		}
	}
	// Grade every chain, then choose which get figures: the most severe
	// first (verdict, then worst error of a requested moment, then states
	// that fell back), ties in reading order.
	type ref struct{ job, point, chain int }
	var all []ref
	verdicts := map[ref]Verdict{}
	worst := map[ref]float64{}
	for ji, j := range r.Jobs {
		for pi, pt := range j.Points {
			for ci, c := range pt.Chains {
				k := ref{ji, pi, ci}
				all = append(all, k)
				var v Verdict
				if pt.LifeCycle() {
					v = AssessAge(c.Case)
				} else {
					v = Assess(c.Case)
				}
				v.advise(c.Case, j)
				verdicts[k] = v
				worst[k] = requestedWorst(c.Case)
			}
		}
	}
	chainOf := func(k ref) Chain { return r.Jobs[k.job].Points[k.point].Chains[k.chain] }
	ranked := append([]ref(nil), all...)
	sort.SliceStable(ranked, func(a, b int) bool {
		ka, kb := ranked[a], ranked[b]
		if la, lb := verdicts[ka].Level, verdicts[kb].Level; la != lb {
			return la > lb
		}
		if wa, wb := worst[ka], worst[kb]; wa != wb {
			return wa > wb || math.IsNaN(wa)
		}
		return chainOf(ka).Chain.Fallbacks() > chainOf(kb).Chain.Fallbacks()
	})
	chosen := map[ref]bool{}
	for _, k := range ranked {
		if len(chosen) == maxCharts {
			break
		}
		chosen[k] = true
	}
	p.Omitted = len(all) - len(chosen)
	// In a large run each job's table lists its most severe chains only.
	listed := map[ref]bool{}
	perJob := map[int]int{}
	for _, k := range ranked {
		if !p.Large || perJob[k.job] < tableRows {
			listed[k] = true
			perJob[k.job]++
		}
	}

	for ji, j := range r.Jobs {
		jv := jobView{Job: j}
		stats := make([]pointStat, len(j.Points))
		for pi, pt := range j.Points {
			st := &stats[pi]
			st.params = pt.Params
			for ci, c := range pt.Chains {
				k := ref{ji, pi, ci}
				st.level = max(st.level, verdicts[k].Level)
				st.states += c.Chain.States()
				st.fallbacks += c.Chain.Fallbacks()
				st.worst = math.Max(st.worst, worst[k])
			}
		}
		if m := newSpaceMap(j.Params, stats); m != nil {
			jv.Space, jv.SpaceAxes = m.panels(), m.axesText()
		}
		for pi, pt := range j.Points {
			pointCharted := false
			resolved := false
			for ci, c := range pt.Chains {
				k := ref{ji, pi, ci}
				v := verdicts[k]
				p.Counts[v.Level]++
				anchor := fmt.Sprintf("c-%d-%d-%d", ji, pt.Index, c.Age)
				title := chainTitle(j, pt, c)
				p.Glance = append(p.Glance, glanceItem{Level: v.Level, Label: title, Anchor: anchor})
				if listed[k] {
					jv.Rows = append(jv.Rows, summaryRow(pt, c, v, anchor, chosen[k]))
				} else {
					jv.RowsLeft[v.Level]++
					jv.RowsLeftTotal++
				}
				if !chosen[k] {
					continue
				}
				if !resolved {
					pt.ResolveLaws()
					resolved = true
					c = pt.Chains[ci]
				}
				cv := chainView{Anchor: anchor, Title: title, Verdict: v}
				c.Label = title
				var figs []figures.Figure
				if pt.LifeCycle() {
					if !pointCharted {
						f, err := figures.ForLifeCycle(pt.AgeFigures(j.Process + ", " + pt.Describe()))
						if err != nil {
							cv.Verdict.Reasons = append(cv.Verdict.Reasons, "Life-cycle figure unavailable: "+err.Error())
						} else {
							figs = append(figs, f)
						}
						pointCharted = true
					}
					figs = append(figs, figures.ForAge(c.Case)...)
				} else {
					fs, err := figures.For(c.Case)
					if err != nil {
						cv.Verdict.Reasons = append(cv.Verdict.Reasons, "Figures unavailable: "+err.Error())
					}
					figs = fs
				}
				for _, f := range figs {
					fv, err := embed(f)
					if err != nil {
						return page{}, err
					}
					cv.Figures = append(cv.Figures, fv)
				}
				jv.Charts = append(jv.Charts, cv)
			}
		}
		if p.Large {
			// Worst first, as the chains were ranked.
			order := map[string]int{}
			n := 0
			for _, k := range ranked {
				if k.job == ji && listed[k] {
					order[fmt.Sprintf("c-%d-%d-%d", ji, r.Jobs[ji].Points[k.point].Index, chainOf(k).Age)] = n
					n++
				}
			}
			sort.SliceStable(jv.Rows, func(a, b int) bool { return order[jv.Rows[a].Anchor] < order[jv.Rows[b].Anchor] })
		}
		p.Jobs = append(p.Jobs, jv)
	}
	p.Glance, p.GlanceMore = trimGlance(p.Glance)
	return p, nil
}

// requestedWorst is the largest standardized error, over the chain's
// states, of the conditional moments it was asked to match (at least mean
// and variance, at most the four the diagnostics keep): zero up to
// rounding where every state matches them, the size of the miss where
// states fell back.
func requestedWorst(c figures.Case) float64 {
	if c.Diag == nil {
		return math.NaN()
	}
	k := min(max(c.Chain.Moments, 2), 4)
	var w float64
	for _, s := range c.Diag.States {
		errs := [4]float64{s.RelErr.Mean, s.RelErr.Var, s.RelErr.Skew, s.RelErr.Kurt}
		for _, e := range errs[:k] {
			if math.IsNaN(e) {
				return math.NaN()
			}
			w = math.Max(w, math.Abs(e))
		}
	}
	return w
}

// glanceLimit is the longest at-a-glance list shown in full.
const glanceLimit = 60

// trimGlance keeps a long list readable: every chain that is not sound
// (up to the limit), then sound ones while room remains, in reading order.
func trimGlance(items []glanceItem) ([]glanceItem, [3]int) {
	var left [3]int
	if len(items) <= glanceLimit {
		return items, left
	}
	keep := make([]bool, len(items))
	n := 0
	for _, sound := range []bool{false, true} {
		for i, it := range items {
			if n < glanceLimit && (it.Level == Sound) == sound {
				keep[i] = true
				n++
			}
		}
	}
	var out []glanceItem
	for i, it := range items {
		if keep[i] {
			out = append(out, it)
		} else {
			left[it.Level]++
		}
	}
	return out, left
}

func chainTitle(j Job, pt Point, c Chain) string {
	s := j.Process + " · " + pt.Describe()
	if pt.LifeCycle() {
		s += fmt.Sprintf(" · age %d", c.Age)
	}
	return s
}

// embed encodes a figure as an SVG data URI: vector graphics that print
// sharply and cannot fetch anything.
func embed(f figures.Figure) (figureView, error) {
	var buf bytes.Buffer
	if err := f.Encode(&buf, figures.SVG); err != nil {
		return figureView{}, fmt.Errorf("report: drawing %s: %w", f.Name, err)
	}
	uri := "data:image/svg+xml;base64," + base64.StdEncoding.EncodeToString(buf.Bytes())
	return figureView{Title: f.Title, Caption: f.Caption, URI: template.URL(uri)}, nil
}

func summaryRow(pt Point, c Chain, v Verdict, anchor string, charted bool) rowView {
	row := rowView{Verdict: v, Point: pt.Describe(), Anchor: anchor, States: c.Chain.States(),
		Fallbacks: c.Chain.Fallbacks(), SpecHash: short(pt.SpecHash), HasFigures: charted}
	if pt.LifeCycle() {
		row.Point = fmt.Sprintf("%s, age %d", pt.Describe(), c.Age)
	}
	least := c.Chain.Moments
	for _, m := range c.Chain.Matched {
		least = min(least, m)
	}
	switch {
	case c.Chain.Moments == 0:
		row.Matched = "none targeted"
	case least == c.Chain.Moments:
		row.Matched = fmt.Sprintf("%d of %d", c.Chain.Moments, c.Chain.Moments)
	default:
		row.Matched = fmt.Sprintf("%d–%d of %d", least, c.Chain.Moments, c.Chain.Moments)
	}
	if d := c.Diag; d != nil {
		row.HasDiagnostic = true
		row.Worst = [4]string{sci(d.WorstRelErr.Mean), sci(d.WorstRelErr.Var), sci(d.WorstRelErr.Skew), sci(d.WorstRelErr.Kurt)}
		// Means are shown to the scale of the process: a rounding residue
		// of 1e-17 around a true mean of 0 is 0.
		scale := math.Max(math.Abs(d.True.SD), math.Abs(d.True.Mean))
		row.Mean = [2]string{num(zeroBelow(d.Chain.Mean, 1e-12*scale)), num(d.True.Mean)}
		row.Skew = [2]string{num(zeroBelow(d.Chain.Skew, 1e-12)), num(d.True.Skew)}
		row.SD = [2]string{num(d.Chain.SD), num(d.True.SD)}
		row.AC = [2]string{num(d.Chain.Autocorr), num(d.True.Autocorr)}
		row.Kurt = [2]string{num(d.Chain.Kurt), num(d.True.Kurt)}
	}
	return row
}

func thresholdText() []string {
	return []string{
		fmt.Sprintf("Sound: every state matches every requested conditional moment (error below %.0e in standardized units), the long-run standard deviation is within %.0f%% of the process's and the first-order autocorrelation within %.2f.", figures.MatchTolerance, 100*sdCaution, autocorrCaution),
		fmt.Sprintf("Use with care: some states fell back to fewer moments, or have rows far from unimodal (at least %g of the probability beyond a valley: a point below %g times a probability farther from the row's mode), or the chain is degenerate but keeps a unique stationary distribution, or the long-run standard deviation is off by %.0f–%.0f%%, or the autocorrelation by %.2f–%.2f.", solver.StrandedFlag, solver.ValleyRatio, 100*sdCaution, 100*sdUnfit, autocorrCaution, autocorrUnfit),
		fmt.Sprintf("Do not use: the matrix is not a valid transition matrix, has no unique stationary distribution, claims moments it does not match, or misses the long-run standard deviation by more than %.0f%% or the autocorrelation by more than %.2f.", 100*sdUnfit, autocorrUnfit),
		"n/a: the number has no finite value (the skewness or kurtosis of a row with all its mass on one point, or a moment the process's law does not have, such as the kurtosis of Student's t with ν ≤ 4).",
	}
}

func short(h string) string {
	if len(h) > 12 {
		return h[:12]
	}
	return h
}

// sci formats an error: two digits from 0.001 up, one-digit scientific
// notation below.
func sci(v float64) string {
	switch {
	case math.IsNaN(v) || math.IsInf(v, 0):
		return "n/a"
	case v == 0:
		return "0"
	case math.Abs(v) >= 1e-3:
		return fmt.Sprintf("%.2g", v)
	}
	return fmt.Sprintf("%.0e", v)
}

// zeroBelow maps values smaller than tol in magnitude to zero.
func zeroBelow(v, tol float64) float64 {
	if math.Abs(v) < tol {
		return 0
	}
	return v
}

func num(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "n/a"
	}
	return fmt.Sprintf("%.4g", v)
}
