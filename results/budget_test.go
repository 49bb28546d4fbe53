package results

import (
	"encoding/json"
	"math"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/estbench/estbench/metrics"
)

// budgetRows is a constructed summary of one problem, "launch": a pf sweep
// whose cost grows as N (300 ns and 2 evaluations per particle and step)
// and whose RMSE falls as 2 + 40/√N, the Monte Carlo rate of a particle
// approximation (Crisan & Doucet 2002, "A survey of convergence results on
// particle filtering methods for practitioners", IEEE Trans. Signal
// Process. 50(3), Theorem 1: mean-square error O(1/N)); so each extra
// particle costs the same and helps less. Besides: a cheap consistent ekf,
// a ukf that costs more than the ekf for a worse RMSE (dominated), a pf
// with diverged runs and a pf whose ANEES is above its bounds, both
// cheaper per RMSE than the rest and both to be left out by default; and
// a second problem with a kf that does not apply.
func budgetRows() []SummaryRow {
	mk := func(filter, config string, n int, rmse, ns, evals, anees float64, div int) SummaryRow {
		return SummaryRow{Problem: "launch", Filter: filter, Config: config, Applicable: true,
			Summary: metrics.Summary{Runs: n, Diverged: div, RMSE: rmse, RMSELo: 0.97 * rmse, RMSEHi: 1.03 * rmse,
				ANEES: anees, ANEESLo: 3.9, ANEESHi: 4.1, NEESInBounds: 0.95, ANIS: nan, ANISLo: nan, ANISHi: nan,
				NsPerStep: ns, MeanESS: nan},
			EvalsPerStep: evals}
	}
	rows := []SummaryRow{
		mk("ekf", "", 100, 30, 900, 4, 4.0, 0),
		mk("ukf", "", 100, 31, 1500, 18, 4.0, 0),
	}
	for _, n := range []int{100, 200, 500, 1000, 2000, 5000, 10000} {
		c := "particles=" + strconv.Itoa(n)
		rows = append(rows, mk("pf", c, 100, 2+40/math.Sqrt(float64(n)), 300*float64(n), 2*float64(n), 4.0, 0))
	}
	rows = append(rows,
		mk("rpf", "particles=300", 100, 3, 90000, 600, 4.0, 2),
		mk("apf", "particles=300", 100, 3.1, 95000, 600, 9.5, 0),
		SummaryRow{Problem: "drone", Filter: "kf", Note: "kf needs a linear model; drone is nonlinear"},
		mk("ekf", "", 100, 5, 700, 4, 4.0, 0),
	)
	rows[len(rows)-1].Problem = "drone"
	return rows
}

func readBackBudgetRows(t *testing.T) []SummaryRow {
	t.Helper()
	path := filepath.Join(t.TempDir(), "summary.parquet")
	if err := WriteSummaryParquet(path, budgetRows()); err != nil {
		t.Fatal(err)
	}
	rows, err := ReadSummaryParquet(path)
	if err != nil {
		t.Fatal(err)
	}
	return rows
}

// checkPlan checks the properties every plan has: the front is monotone
// (cost up, RMSE strictly down), the best point is within the budget and
// has the lowest RMSE of every affordable candidate, and the next point
// is over the budget.
func checkPlan(t *testing.T, pl *BudgetPlan, max float64) {
	t.Helper()
	for i := 1; i < len(pl.Front); i++ {
		a, b := pl.Front[i-1], pl.Front[i]
		if !(b.Cost >= a.Cost && b.RMSE < a.RMSE) {
			t.Errorf("%s: front not monotone at %d: (%v, %v) then (%v, %v)", pl.Problem, i, a.Cost, a.RMSE, b.Cost, b.RMSE)
		}
	}
	best := math.Inf(1)
	for _, ps := range [][]BudgetPoint{pl.Front, pl.Dominated} {
		for _, p := range ps {
			if p.Cost <= max {
				best = min(best, p.RMSE)
			}
		}
	}
	if pl.Best >= 0 {
		if b := pl.Front[pl.Best]; b.Cost > max || b.RMSE != best {
			t.Errorf("%s: best %s %s costs %v (budget %v), RMSE %v (lowest affordable %v)", pl.Problem, b.Filter, b.Config, b.Cost, max, b.RMSE, best)
		}
	} else if !math.IsInf(best, 1) {
		t.Errorf("%s: no best, but a candidate with RMSE %v is affordable", pl.Problem, best)
	}
	if pl.Next >= 0 && pl.Front[pl.Next].Cost <= max {
		t.Errorf("%s: next step costs %v, within the budget %v", pl.Problem, pl.Front[pl.Next].Cost, max)
	}
}

func TestBudgetFront(t *testing.T) {
	rows := readBackBudgetRows(t)
	plans := Budget(rows, BudgetOptions{Max: 400000}) // 400 µs: up to pf particles=1000
	if len(plans) != 2 || plans[0].Problem != "launch" || plans[1].Problem != "drone" {
		t.Fatalf("plans %+v", plans)
	}
	pl := &plans[0]
	checkPlan(t, pl, 400000)
	var front []string
	for _, p := range pl.Front {
		front = append(front, pointName(&p))
	}
	want := []string{"ekf", "pf particles=100", "pf particles=200", "pf particles=500", "pf particles=1000",
		"pf particles=2000", "pf particles=5000", "pf particles=10000"}
	if !slices.Equal(front, want) {
		t.Errorf("front %q, want %q", front, want)
	}
	if b, n := pl.Front[pl.Best], pl.Front[pl.Next]; b.Config != "particles=1000" || n.Config != "particles=2000" {
		t.Errorf("best %s, next %s; want particles=1000 then particles=2000", b.Config, n.Config)
	}
	if len(pl.Dominated) != 1 || pl.Dominated[0].Filter != "ukf" {
		t.Errorf("dominated %+v, want the ukf", pl.Dominated)
	}
	if len(pl.Excluded) != 2 || pl.Excluded[0].Filter != "rpf" || !strings.Contains(pl.Excluded[0].Reason, "2 of 100 runs diverged") ||
		pl.Excluded[1].Filter != "apf" || !strings.Contains(pl.Excluded[1].Reason, "ANEES 9.5 above its 95% bounds [3.9, 4.1]") {
		t.Errorf("excluded %+v", pl.Excluded)
	}
	checkPlan(t, &plans[1], 400000)
	if len(plans[1].Excluded) != 0 || len(plans[1].Front) != 1 || plans[1].Best != 0 || plans[1].Next != -1 {
		t.Errorf("drone plan %+v: want the ekf alone, the kf not listed", plans[1])
	}
	if !Fits(plans) {
		t.Error("Fits false, want true")
	}

	// Included, the diverged rpf and the inconsistent apf are on the front
	// and, at 300 particles for RMSE 3, cheaper per RMSE than the pf sweep.
	plans = Budget(rows, BudgetOptions{Max: 400000, IncludeDiverged: true, IncludeInconsistent: true})
	checkPlan(t, &plans[0], 400000)
	if len(plans[0].Excluded) != 0 || !slices.ContainsFunc(plans[0].Front, func(p BudgetPoint) bool { return p.Filter == "rpf" }) {
		t.Errorf("with --include-*: excluded %+v, front %+v", plans[0].Excluded, plans[0].Front)
	}

	// In evaluations: 1500 per step affords pf particles=500 (1000) but
	// not particles=1000 (2000).
	plans = Budget(rows, BudgetOptions{Cost: CostEvals, Max: 1500})
	checkPlan(t, &plans[0], 1500)
	if b := plans[0].Front[plans[0].Best]; b.Config != "particles=500" || b.Cost != 1000 {
		t.Errorf("evals budget: best %s at %v, want particles=500 at 1000", b.Config, b.Cost)
	}

	// Below every cost: nothing fits, the next step is the cheapest.
	plans = Budget(rows, BudgetOptions{Max: 100})
	if plans[0].Best != -1 || plans[0].Next != 0 || Fits(plans) {
		t.Errorf("tiny budget: best %d next %d fits %v, want -1, 0, false", plans[0].Best, plans[0].Next, Fits(plans))
	}
}

// Properties over many budgets and a shuffled input: the choice never
// exceeds the budget, and a larger budget never chooses a worse RMSE.
func TestBudgetMonotoneInBudget(t *testing.T) {
	rows := readBackBudgetRows(t)
	slices.Reverse(rows)
	last := math.Inf(1)
	for max := 500.0; max < 1e7; max *= 1.5 {
		plans := Budget(rows, BudgetOptions{Max: max})
		pl := &plans[0]
		if pl.Problem != "drone" {
			t.Fatalf("first problem %s, want drone (first in the reversed rows)", pl.Problem)
		}
		pl = &plans[1]
		checkPlan(t, pl, max)
		if pl.Best < 0 {
			continue
		}
		if r := pl.Front[pl.Best].RMSE; r > last {
			t.Errorf("budget %v chose RMSE %v, a smaller budget chose %v", max, r, last)
		} else {
			last = r
		}
	}
}

func TestBudgetFormats(t *testing.T) {
	rows := readBackBudgetRows(t)
	opt := BudgetOptions{Max: 400000}
	plans := Budget(rows, opt)
	prov := Provenance{Suite: "harbour-launch", Seed: 7, Runs: 100, Tool: "estbench v0.1.0"}
	for _, f := range []struct{ format, golden string }{
		{"table", "budget.table.txt"}, {"markdown", "budget.markdown.md"}, {"json", "budget.json"},
	} {
		var b strings.Builder
		if err := WriteBudget(&b, f.format, plans, opt, prov); err != nil {
			t.Fatal(err)
		}
		checkGolden(t, f.golden, []byte(b.String()))
	}
	var b strings.Builder
	if err := WriteBudget(&b, "json", plans, opt, prov); err != nil {
		t.Fatal(err)
	}
	var got []struct {
		Problem string  `json:"problem"`
		Cost    string  `json:"cost"`
		Gain    float64 `json:"next_rmse_gain"`
		Best    *struct {
			Config string  `json:"config"`
			RMSE   float64 `json:"rmse"`
		} `json:"best"`
		Next     *struct{} `json:"next"`
		Excluded []BudgetExcluded
	}
	if err := json.Unmarshal([]byte(b.String()), &got); err != nil {
		t.Fatal(err)
	}
	// The gain of the next step is 40/√1000 − 40/√2000.
	if w := 40/math.Sqrt(1000) - 40/math.Sqrt(2000); got[0].Best == nil || got[0].Best.Config != "particles=1000" ||
		math.Abs(got[0].Gain-w) > 1e-12 || got[1].Next != nil || got[0].Cost != "ns_per_step" || len(got[0].Excluded) != 2 {
		t.Errorf("json %+v", got)
	}
	if err := WriteBudget(&b, "latex", plans, opt, prov); err == nil {
		t.Error("latex: no error")
	}
}
