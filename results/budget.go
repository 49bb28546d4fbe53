package results

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"
)

// CostMeasure is what a compute budget is spent in.
type CostMeasure int

const (
	// CostTime is ns_per_step: wall time per filter step on the machine
	// that made the results.
	CostTime CostMeasure = iota
	// CostEvals is evals_per_step: model evaluations per filter step, the
	// same on every machine.
	CostEvals
)

// Column is the summary column of the measure.
func (c CostMeasure) Column() string {
	if c == CostEvals {
		return "evals_per_step"
	}
	return "ns_per_step"
}

// BudgetFormats lists the formats of WriteBudget.
var BudgetFormats = []string{"table", "markdown", "json"}

// BudgetOptions say what Budget may choose from. Max must be positive.
type BudgetOptions struct {
	Cost CostMeasure // what Max is in; the zero value is CostTime
	Max  float64     // the budget per filter step, in ns or evaluations

	// By default a configuration with any diverged run, or whose ANEES is
	// outside its 95% bounds, is left out (and listed with the reason).
	IncludeDiverged     bool
	IncludeInconsistent bool
}

// BudgetPoint is one candidate configuration of a problem.
type BudgetPoint struct {
	Filter, Config       string
	Runs, Diverged       int
	RMSE, RMSELo, RMSEHi float64
	ANEES                float64
	Mark                 string // ANEES against its 95% bounds: in, high or low
	NsPerStep            float64
	EvalsPerStep         float64
	Cost                 float64 // NsPerStep or EvalsPerStep, as the budget is
}

// BudgetExcluded is a configuration left out of a problem's choice.
type BudgetExcluded struct {
	Filter string `json:"filter"`
	Config string `json:"config"`
	Reason string `json:"reason"`
}

// BudgetPlan is the choice for one problem.
type BudgetPlan struct {
	Problem string
	// Front holds the configurations that no other beats on both cost and
	// RMSE, by increasing cost and hence strictly decreasing RMSE.
	Front []BudgetPoint
	// Best indexes the front point with the lowest RMSE whose cost is
	// within the budget (the most expensive affordable one); -1 when none
	// is.
	Best int
	// Next indexes the front point after Best, the next budget step: it is
	// over the budget and buys a lower RMSE. When Best is -1 it is the
	// cheapest point; -1 when there is none.
	Next int
	// Dominated are the other candidates, by increasing cost.
	Dominated []BudgetPoint
	// Excluded are the configurations that ran but were left out, with why.
	Excluded []BudgetExcluded
}

// Budget chooses, for each problem of a summary in order of first
// appearance, among the configurations that ran, have an RMSE and a cost,
// and (unless included by opt) did not diverge and are consistent: the
// Pareto front of RMSE against cost (a point is on it when no other point
// costs no more and has a lower RMSE, or costs less and has no higher RMSE;
// of points equal in both, the first in suite order), the best point within
// opt.Max and the next point of the front beyond it. Pairs that do not
// apply are not candidates and are not listed.
func Budget(rows []SummaryRow, opt BudgetOptions) []BudgetPlan {
	var plans []BudgetPlan
	at := map[string]int{}
	var cands [][]BudgetPoint
	for i := range rows {
		r := &rows[i]
		if !r.Applicable {
			continue
		}
		k, ok := at[r.Problem]
		if !ok {
			k = len(plans)
			at[r.Problem] = k
			plans = append(plans, BudgetPlan{Problem: r.Problem, Best: -1, Next: -1})
			cands = append(cands, nil)
		}
		p := BudgetPoint{
			Filter: r.Filter, Config: r.Config, Runs: r.Runs, Diverged: r.Diverged,
			RMSE: r.RMSE, RMSELo: r.RMSELo, RMSEHi: r.RMSEHi, ANEES: r.ANEES,
			Mark:      aneesMark(r.ANEES, r.ANEESLo, r.ANEESHi),
			NsPerStep: r.NsPerStep, EvalsPerStep: r.EvalsPerStep,
		}
		p.Cost = p.NsPerStep
		if opt.Cost == CostEvals {
			p.Cost = p.EvalsPerStep
		}
		if why := budgetExclusion(r, &p, opt); why != "" {
			plans[k].Excluded = append(plans[k].Excluded, BudgetExcluded{Filter: r.Filter, Config: r.Config, Reason: why})
			continue
		}
		cands[k] = append(cands[k], p)
	}
	for k := range plans {
		pl := &plans[k]
		c := cands[k]
		slices.SortStableFunc(c, func(a, b BudgetPoint) int {
			if a.Cost != b.Cost {
				return cmpFloat(a.Cost, b.Cost)
			}
			return cmpFloat(a.RMSE, b.RMSE)
		})
		for _, p := range c {
			if len(pl.Front) == 0 || p.RMSE < pl.Front[len(pl.Front)-1].RMSE {
				pl.Front = append(pl.Front, p)
			} else {
				pl.Dominated = append(pl.Dominated, p)
			}
		}
		for i, p := range pl.Front {
			if p.Cost <= opt.Max {
				pl.Best = i
			}
		}
		if pl.Best+1 < len(pl.Front) {
			pl.Next = pl.Best + 1
		}
	}
	return plans
}

func cmpFloat(a, b float64) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// budgetExclusion says why a configuration that ran is not a candidate, ""
// when it is.
func budgetExclusion(r *SummaryRow, p *BudgetPoint, opt BudgetOptions) string {
	var why []string
	if !cmpFinite(p.RMSE) {
		why = append(why, "no RMSE (every run diverged)")
	}
	if !cmpFinite(p.Cost) {
		why = append(why, "no "+opt.Cost.Column())
	}
	if r.Diverged > 0 && !opt.IncludeDiverged {
		why = append(why, fmt.Sprintf("%d of %d runs diverged (--include-diverged keeps it)", r.Diverged, r.Runs))
	}
	if p.Mark != "in" && !opt.IncludeInconsistent {
		if p.Mark == "" {
			why = append(why, "no ANEES bounds (--include-inconsistent keeps it)")
		} else {
			why = append(why, fmt.Sprintf("ANEES %s %s its 95%% bounds [%s, %s] (--include-inconsistent keeps it)",
				strconv.FormatFloat(p.ANEES, 'g', 3, 64), map[string]string{"high": "above", "low": "below"}[p.Mark],
				strconv.FormatFloat(r.ANEESLo, 'g', 3, 64), strconv.FormatFloat(r.ANEESHi, 'g', 3, 64)))
		}
	}
	return strings.Join(why, "; ")
}

// Fits reports whether every problem has a configuration within the
// budget.
func Fits(plans []BudgetPlan) bool {
	for i := range plans {
		if plans[i].Best < 0 {
			return false
		}
	}
	return true
}

// WriteBudget writes the plans in one of BudgetFormats. The human formats
// ("table", "markdown") show, per problem, the candidates by increasing
// cost with their status (best: the choice within the budget; within: on
// the front and affordable; next: the next budget step; over: on the front
// beyond it; dominated: another candidate is cheaper and no worse), then a
// sentence per problem with the choice and what the next step would buy,
// and the excluded configurations as numbered notes. "json" writes an
// array with one object per problem: problem, cost (the column the budget
// is on), budget, best and next (a point, or null), next_cost_ratio,
// next_rmse_gain and next_rmse_gain_rel (null without both points), front,
// dominated (arrays of points) and excluded (filter, config, reason). A
// point has filter, config, runs, diverged, rmse, rmse_ci_lo, rmse_ci_hi,
// anees, anees_mark, ns_per_step, evals_per_step and cost; values that do
// not exist are null.
func WriteBudget(w io.Writer, format string, plans []BudgetPlan, opt BudgetOptions, prov Provenance) error {
	switch format {
	case "table", "markdown":
		return writeBudgetHuman(w, plans, opt, prov, format == "markdown")
	case "json":
		return writeBudgetJSON(w, plans, opt)
	}
	return fmt.Errorf("results: unknown format %q (valid: %s)", format, strings.Join(BudgetFormats, ", "))
}

// Budget statuses of a candidate in the human formats.
const (
	budgetBest      = "best"
	budgetWithin    = "within"
	budgetNext      = "next"
	budgetOver      = "over"
	budgetDominated = "dominated"
)

// costText writes a cost with its unit, for sentences.
func costText(c CostMeasure, v float64) string {
	if c == CostEvals {
		return strconv.FormatFloat(v, 'f', -1, 64) + " evaluations/step"
	}
	sc := timeScale([]float64{v})
	return sc.format(v) + " " + sc.label + "/step"
}

// sig3 writes v with three significant digits (at least), in fixed notation.
func sig3(v float64) string {
	return strconv.FormatFloat(v, 'f', decimalsFor(math.Abs(v)), 64)
}

func pointName(p *BudgetPoint) string {
	if p.Config == "" {
		return p.Filter
	}
	return p.Filter + " " + p.Config
}

// sentence says what the plan chose and what the next step would buy.
func (pl *BudgetPlan) sentence(opt BudgetOptions) string {
	s := pl.Problem + ": "
	switch {
	case len(pl.Front) == 0:
		return s + "no candidate (see the excluded configurations)"
	case pl.Best < 0:
		p := &pl.Front[0]
		return s + "nothing within " + costText(opt.Cost, opt.Max) + "; the cheapest candidate, " + pointName(p) +
			", needs " + costText(opt.Cost, p.Cost) + " for RMSE " + sig3(p.RMSE)
	}
	b := &pl.Front[pl.Best]
	s += "best within " + costText(opt.Cost, opt.Max) + " is " + pointName(b) + ", RMSE " +
		sig3(b.RMSE) + " at " + costText(opt.Cost, b.Cost)
	if pl.Next < 0 {
		return s + "; no candidate beyond it has a lower RMSE"
	}
	n := &pl.Front[pl.Next]
	return s + "; the next step, " + pointName(n) + " at " + costText(opt.Cost, n.Cost) +
		" (×" + strconv.FormatFloat(n.Cost/b.Cost, 'f', 2, 64) + "), would lower RMSE by " +
		sig3(b.RMSE-n.RMSE) + " (" + strconv.FormatFloat(100*(b.RMSE-n.RMSE)/b.RMSE, 'f', 1, 64) + "%)"
}

func writeBudgetHuman(w io.Writer, plans []BudgetPlan, opt BudgetOptions, prov Provenance, md bool) error {
	var rmse, ns []float64
	for i := range plans {
		for _, ps := range [][]BudgetPoint{plans[i].Front, plans[i].Dominated} {
			for _, p := range ps {
				rmse = append(rmse, p.RMSE, p.RMSELo, p.RMSEHi)
				ns = append(ns, p.NsPerStep)
			}
		}
	}
	scRMSE, scTime := magnitudeScale(rmse), timeScale(ns)
	h := &human{
		head: []string{"problem", "filter", "config", scTime.label + "/step", "evals/step",
			withFactor("RMSE", scRMSE) + " [95% CI]", "ANEES vs bounds", "diverged", "status"},
		right: []bool{false, false, false, true, true, true, false, true, false},
	}
	evals := func(v float64) string {
		if !cmpFinite(v) {
			return missing
		}
		return strconv.FormatFloat(v, 'f', -1, 64)
	}
	var sentences []string
	for i := range plans {
		pl := &plans[i]
		type row struct {
			p      BudgetPoint
			status string
		}
		var rs []row
		for j, p := range pl.Front {
			st := budgetOver
			switch {
			case j == pl.Best:
				st = budgetBest
			case j == pl.Next:
				st = budgetNext
			case pl.Best >= 0 && j < pl.Best:
				st = budgetWithin
			}
			rs = append(rs, row{p, st})
		}
		for _, p := range pl.Dominated {
			rs = append(rs, row{p, budgetDominated})
		}
		slices.SortStableFunc(rs, func(a, b row) int { return cmpFloat(a.p.Cost, b.p.Cost) })
		for _, r := range rs {
			c := []string{pl.Problem, r.p.Filter, r.p.Config, scTime.format(r.p.NsPerStep), evals(r.p.EvalsPerStep),
				withInterval(scRMSE, r.p.RMSE, r.p.RMSELo, r.p.RMSEHi), r.p.Mark, strconv.Itoa(r.p.Diverged), r.status}
			if c[2] == "" {
				c[2] = "default"
			}
			h.cells = append(h.cells, c)
		}
		for _, e := range pl.Excluded {
			n := pl.Problem + ": " + e.Filter + " "
			if e.Config != "" {
				n += e.Config
			} else {
				n += "default"
			}
			h.notes = append(h.notes, n+" left out: "+e.Reason)
		}
		sentences = append(sentences, pl.sentence(opt))
	}
	var b strings.Builder
	head := "estbench budget: " + costText(opt.Cost, opt.Max) + " (" + opt.Cost.Column() + ")"
	if line := provenanceLine(prov); line != "" {
		head += "; " + line
	}
	if md {
		b.WriteString("**" + head + "**\n\n")
	} else {
		b.WriteString(head + "\n\n")
	}
	if _, err := io.WriteString(w, b.String()); err != nil {
		return err
	}
	var err error
	if md {
		err = writeMarkdown(w, h)
	} else {
		err = writeTerminal(w, h)
	}
	if err != nil {
		return err
	}
	b.Reset()
	b.WriteByte('\n')
	for _, s := range sentences {
		if md {
			b.WriteString("- ")
		}
		b.WriteString(s + "\n")
	}
	b.WriteString("\nstatus: best, the lowest RMSE within the budget; within, on the front and affordable; " +
		"next, the next point of the front beyond the budget; over, further out; dominated, another candidate costs no more for a lower RMSE. " +
		"Candidates ran without divergence and with ANEES inside its 95% bounds unless --include-diverged or --include-inconsistent.\n")
	_, err = io.WriteString(w, b.String())
	return err
}

// budgetFloat is a float64 that is null in JSON when NaN or infinite.
type budgetFloat float64

func (f budgetFloat) MarshalJSON() ([]byte, error) {
	return cmpJSONFloat(nil, float64(f)), nil
}

type budgetPointJSON struct {
	Filter       string      `json:"filter"`
	Config       string      `json:"config"`
	Runs         int         `json:"runs"`
	Diverged     int         `json:"diverged"`
	RMSE         budgetFloat `json:"rmse"`
	RMSELo       budgetFloat `json:"rmse_ci_lo"`
	RMSEHi       budgetFloat `json:"rmse_ci_hi"`
	ANEES        budgetFloat `json:"anees"`
	Mark         *string     `json:"anees_mark"`
	NsPerStep    budgetFloat `json:"ns_per_step"`
	EvalsPerStep budgetFloat `json:"evals_per_step"`
	Cost         budgetFloat `json:"cost"`
}

type budgetPlanJSON struct {
	Problem   string            `json:"problem"`
	Cost      string            `json:"cost"`
	Budget    budgetFloat       `json:"budget"`
	Best      *budgetPointJSON  `json:"best"`
	Next      *budgetPointJSON  `json:"next"`
	CostRatio budgetFloat       `json:"next_cost_ratio"`
	Gain      budgetFloat       `json:"next_rmse_gain"`
	GainRel   budgetFloat       `json:"next_rmse_gain_rel"`
	Front     []budgetPointJSON `json:"front"`
	Dominated []budgetPointJSON `json:"dominated"`
	Excluded  []BudgetExcluded  `json:"excluded"`
}

func pointJSON(p *BudgetPoint) budgetPointJSON {
	j := budgetPointJSON{Filter: p.Filter, Config: p.Config, Runs: p.Runs, Diverged: p.Diverged,
		RMSE: budgetFloat(p.RMSE), RMSELo: budgetFloat(p.RMSELo), RMSEHi: budgetFloat(p.RMSEHi),
		ANEES: budgetFloat(p.ANEES), NsPerStep: budgetFloat(p.NsPerStep), EvalsPerStep: budgetFloat(p.EvalsPerStep),
		Cost: budgetFloat(p.Cost)}
	if p.Mark != "" {
		m := p.Mark
		j.Mark = &m
	}
	return j
}

func writeBudgetJSON(w io.Writer, plans []BudgetPlan, opt BudgetOptions) error {
	out := make([]budgetPlanJSON, len(plans))
	for i := range plans {
		pl := &plans[i]
		nan := budgetFloat(math.NaN())
		o := budgetPlanJSON{Problem: pl.Problem, Cost: opt.Cost.Column(), Budget: budgetFloat(opt.Max),
			CostRatio: nan, Gain: nan, GainRel: nan,
			Front: []budgetPointJSON{}, Dominated: []budgetPointJSON{}, Excluded: []BudgetExcluded{}}
		for j := range pl.Front {
			o.Front = append(o.Front, pointJSON(&pl.Front[j]))
		}
		for j := range pl.Dominated {
			o.Dominated = append(o.Dominated, pointJSON(&pl.Dominated[j]))
		}
		o.Excluded = append(o.Excluded, pl.Excluded...)
		if pl.Best >= 0 {
			p := pointJSON(&pl.Front[pl.Best])
			o.Best = &p
		}
		if pl.Next >= 0 {
			p := pointJSON(&pl.Front[pl.Next])
			o.Next = &p
		}
		if pl.Best >= 0 && pl.Next >= 0 {
			b, n := &pl.Front[pl.Best], &pl.Front[pl.Next]
			o.CostRatio = budgetFloat(n.Cost / b.Cost)
			o.Gain = budgetFloat(b.RMSE - n.RMSE)
			o.GainRel = budgetFloat((b.RMSE - n.RMSE) / b.RMSE)
		}
		out[i] = o
	}
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	enc.SetIndent("", "  ")
	if err := enc.Encode(out); err != nil {
		return err
	}
	_, err := w.Write(buf.Bytes())
	return err
}
