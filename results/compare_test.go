package results

import (
	"encoding/json"
	"errors"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/estbench/estbench/metrics"
)

// fakeRow is one constructed pair of a result folder: per-run values from
// which the summary is computed as the accumulator defines it (RMSE the
// root of the mean of the runs' squared rmse, ANEES the mean of the runs'
// ANEES, over the runs that did not diverge).
type fakeRow struct {
	problem, filter, config string
	rmse, anees             []float64
	div                     []bool  // diverged runs; nil for none
	lo, hi                  float64 // ANEES bounds
	ns                      float64 // ns per step
	na                      string  // the note of a pair that does not apply
}

func fakeDir(dir string, seed uint64, rows ...fakeRow) *ResultDir {
	d := &ResultDir{Dir: dir, Manifest: Manifest{Tool: "estbench", Version: "v0.0.0-test", Suite: "fixture",
		SuiteSHA256: "ab", Seed: seed, Runs: 0}}
	for _, f := range rows {
		s := SummaryRow{Problem: f.problem, Filter: f.filter, Config: f.config, Applicable: f.na == "", Note: f.na}
		s.RMSE, s.RMSELo, s.RMSEHi, s.ANEES = nan, nan, nan, nan
		s.ANEESLo, s.ANEESHi, s.NsPerStep = f.lo, f.hi, f.ns
		if s.Applicable {
			var mse, anees float64
			m := 0
			for r := range f.rmse {
				st := metrics.RunStat{Run: r, RMSE: f.rmse[r], ANEES: f.anees[r], ANIS: nan, NsPerStep: f.ns, MeanESS: nan}
				if f.div != nil && f.div[r] {
					st.Diverged, st.DivStep, st.Reason, st.RMSE, st.ANEES = true, 3, "covariance not positive definite", nan, nan
					s.Diverged++
				} else {
					mse += f.rmse[r] * f.rmse[r]
					anees += f.anees[r]
					m++
				}
				d.Runs = append(d.Runs, RunRow{Problem: f.problem, Filter: f.filter, Config: f.config, RunStat: st})
			}
			s.Runs = len(f.rmse)
			s.RMSE, s.ANEES = math.Sqrt(mse/float64(m)), anees/float64(m)
			d.Manifest.Runs = s.Runs
		}
		d.Summary = append(d.Summary, s)
	}
	return d
}

// spread returns n values with mean exactly mu and plug-in standard
// deviation (divisor n) exactly sd, from a fixed normal stream.
func spread(n int, mu, sd float64, seed uint64) []float64 {
	rng := rand.New(rand.NewPCG(seed, 1))
	v := make([]float64, n)
	var m metrics.Moments
	for i := range v {
		v[i] = rng.NormFloat64()
		m.Add(v[i])
	}
	s := math.Sqrt(m.Var() * float64(n-1) / float64(n))
	for i := range v {
		v[i] = mu + sd*(v[i]-m.Mean())/s
	}
	return v
}

func constant(n int, c float64) []float64 {
	v := make([]float64, n)
	for i := range v {
		v[i] = c
	}
	return v
}

func scaled(v []float64, f float64) []float64 {
	w := make([]float64, len(v))
	for i := range v {
		w[i] = f * v[i]
	}
	return w
}

// The percentile bootstrap interval of a mean of n observations is, for a
// statistic this close to normal, mean ± z sd/√n with sd the plug-in
// standard deviation (Efron & Tibshirani 1993, "An Introduction to the
// Bootstrap", §13.3: the percentile interval agrees with the standard
// normal interval when the bootstrap distribution is normal; z = 1.959964
// is the 0.975 normal quantile). Paired resampling of n − b gives the
// interval of the paired differences; resampling each side on its own
// gives the two-sample interval with variance s_b²/n_b + s_n²/n_n
// (ibid., §8.3). The base values vary much more than the differences, so
// the two intervals differ by a factor of about 5 and neither check can
// pass with the other's resampling.
func TestBootstrapAgainstNormalTheory(t *testing.T) {
	const n, z = 400, 1.959964
	b := spread(n, 10, 1, 1)
	d := spread(n, 0.05, 0.2, 2)
	nw := make([]float64, n)
	for i := range nw {
		nw[i] = b[i] + d[i]
	}
	opt := CompareOptions{Resamples: 20000}.withDefaults()
	stat := func(ib, in []int) float64 { return cmpMeanAt(nw, in) - cmpMeanAt(b, ib) }

	v, lo, hi := cmpChange(b, nw, true, opt, 7, stat)
	se := 0.2 / math.Sqrt(n)
	// Monte Carlo error of a 2.5% quantile of 20000 resamples is about
	// 0.02 se (sqrt(p(1−p)/B)/φ(z)); 0.1 se leaves room for the skewness
	// of a finite sample.
	if math.Abs(v-0.05) > 1e-12 || math.Abs(lo-(0.05-z*se)) > 0.1*se || math.Abs(hi-(0.05+z*se)) > 0.1*se {
		t.Errorf("paired: %v [%v, %v], want 0.05 [%v, %v]", v, lo, hi, 0.05-z*se, 0.05+z*se)
	}

	// Unpaired: the standard deviation of nw is sqrt(1 + 0.04 + 2 cov);
	// take it from the sample.
	var mn metrics.Moments
	for _, x := range nw {
		mn.Add(x)
	}
	sn2 := mn.Var() * (n - 1) / n
	se2 := math.Sqrt(1.0/n + sn2/n)
	_, lo, hi = cmpChange(b, nw, false, opt, 7, stat)
	if math.Abs(lo-(0.05-z*se2)) > 0.1*se2 || math.Abs(hi-(0.05+z*se2)) > 0.1*se2 {
		t.Errorf("unpaired: [%v, %v], want [%v, %v]", lo, hi, 0.05-z*se2, 0.05+z*se2)
	}
}

// On a constructed pair whose base runs all have rmse 1 and ANEES 1 and
// whose new runs have mse 1 + d_r and ANEES exp(d_r), with d of mean 0.03
// and sd 0.1: the mean of d has the interval mean ± z sd/√n as above, and
// the percentile interval respects monotone transformations (Efron &
// Tibshirani 1993, §13.3), so the rmse change sqrt(1 + mean d) − 1 has
// the ends sqrt(1 + the ends) − 1, and the ANEES change (of the geometric
// mean) exp(mean d) − 1 has the ends exp(the ends) − 1.
func TestCompareIntervalsOnConstructedPair(t *testing.T) {
	const n, z = 400, 1.959964
	d := spread(n, 0.03, 0.1, 3)
	newRMSE, newANEES := make([]float64, n), make([]float64, n)
	for i := range d {
		newRMSE[i] = math.Sqrt(1 + d[i])
		newANEES[i] = math.Exp(d[i])
	}
	base := fakeDir("base", 1, fakeRow{problem: "cv2d", filter: "kf", rmse: constant(n, 1), anees: constant(n, 1), lo: 0.9, hi: 1.1, ns: 100})
	cur := fakeDir("new", 1, fakeRow{problem: "cv2d", filter: "kf", rmse: newRMSE, anees: newANEES, lo: 0.9, hi: 1.1, ns: 100})
	c, err := Compare(base, cur, CompareOptions{Resamples: 20000})
	if err != nil {
		t.Fatal(err)
	}
	r := c.Rows[0]
	se := 0.1 / math.Sqrt(n)
	lo, hi := 0.03-z*se, 0.03+z*se
	// exp' ≤ 1.05 near 0.03: 0.1 se on the log scale is at most 0.105 se.
	if w := math.Expm1(0.03); math.Abs(r.ANEESChange-w) > 1e-12 ||
		math.Abs(r.ANEESChangeLo-math.Expm1(lo)) > 0.105*se || math.Abs(r.ANEESChangeHi-math.Expm1(hi)) > 0.105*se {
		t.Errorf("anees change %v [%v, %v], want %v [%v, %v]", r.ANEESChange, r.ANEESChangeLo, r.ANEESChangeHi, w, math.Expm1(lo), math.Expm1(hi))
	}
	// d/dx sqrt(1+x) ≤ 1/2 near 0.03: the same 0.1 se on the mse scale is
	// at most 0.05 se on the rmse scale.
	if w := math.Sqrt(1.03) - 1; math.Abs(r.RMSEChange-w) > 1e-12 ||
		math.Abs(r.RMSEChangeLo-(math.Sqrt(1+lo)-1)) > 0.05*se || math.Abs(r.RMSEChangeHi-(math.Sqrt(1+hi)-1)) > 0.05*se {
		t.Errorf("rmse change %v [%v, %v], want %v [%v, %v]", r.RMSEChange, r.RMSEChangeLo, r.RMSEChangeHi,
			w, math.Sqrt(1+lo)-1, math.Sqrt(1+hi)-1)
	}
	// +1.49% [+1.01%, +1.97%] (normal theory: [+1.00%, +1.97%]): excludes zero but lies within ±2%, so the
	// rule of the doc makes it same; with a 1% tolerance it is worse.
	if r.Verdict != VerdictSame || r.BaseMark != "in" || r.NewMark != "in" {
		t.Errorf("verdict %s (marks %s → %s), want same", r.Verdict, r.BaseMark, r.NewMark)
	}
	c, err = Compare(base, cur, CompareOptions{Resamples: 20000, Tolerance: 0.01})
	if err != nil {
		t.Fatal(err)
	}
	if r := c.Rows[0]; r.Verdict != VerdictWorse || !strings.Contains(strings.Join(r.Why, ";"), "RMSE +1.49% [+1.01%, +1.97%]") {
		t.Errorf("tolerance 1%%: %s %q, want worse citing the interval", r.Verdict, r.Why)
	}
}

func TestCmpJudge(t *testing.T) {
	for _, c := range []struct {
		name       string
		lo, hi     float64
		want       string
		determined bool
	}{
		{"covers zero", -0.05, 0.08, VerdictSame, true},
		{"within tolerance above zero", 0.005, 0.019, VerdictSame, true},
		{"within tolerance below zero", -0.019, -0.001, VerdictSame, true},
		{"above zero, past tolerance", 0.01, 0.03, VerdictWorse, true},
		{"far above", 0.2, 0.4, VerdictWorse, true},
		{"below zero, past tolerance", -0.3, -0.01, VerdictBetter, true},
		{"no interval", nan, nan, VerdictSame, false},
	} {
		v, ok := cmpJudge(c.lo, c.hi, 0.02)
		if v != c.want || ok != c.determined {
			t.Errorf("%s: [%v, %v] → %s %v, want %s %v", c.name, c.lo, c.hi, v, ok, c.want, c.determined)
		}
	}
}

// Each rule of the verdict on a constructed pair. The base has 30 runs
// whose rmse and ANEES spread by 5% around their means.
func TestCompareVerdicts(t *testing.T) {
	const n = 30
	rmse := spread(n, 2, 0.1, 11)
	anees := spread(n, 4, 0.2, 12)
	noise := spread(n, 0, 0.002, 13) // small run-to-run change of the new side
	wobble := func(v []float64, f float64) []float64 {
		w := make([]float64, len(v))
		for i := range v {
			w[i] = v[i] * (f + noise[i])
		}
		return w
	}
	in := func(r fakeRow) fakeRow { r.lo, r.hi = 3.5, 4.5; return r } // ANEES 4 inside
	row := func(filter string, rm, an []float64) fakeRow {
		return in(fakeRow{problem: "ctrb", filter: filter, rmse: rm, anees: an, ns: 1000})
	}
	divs := make([]bool, n)
	divs[4] = true
	cases := []struct {
		name     string
		base     fakeRow
		cur      fakeRow
		want     string
		time     string
		whyHas   string
		baseMark string
		newMark  string
	}{
		{"identical", row("a", rmse, anees), row("a", rmse, anees), VerdictSame, TimeSame, "", "in", "in"},
		{"rmse 10% higher", row("b", rmse, anees), row("b", wobble(rmse, 1.1), anees), VerdictWorse, TimeSame, "RMSE +10", "in", "in"},
		{"rmse 10% lower", row("c", rmse, anees), row("c", wobble(rmse, 0.9), anees), VerdictBetter, TimeSame, "RMSE -10", "in", "in"},
		{"rmse 1% higher, within tolerance", row("d", rmse, anees), row("d", wobble(rmse, 1.01), anees), VerdictSame, TimeSame, "", "in", "in"},
		{"one more run diverged", row("e", rmse, anees), func() fakeRow { r := row("e", rmse, anees); r.div = divs; return r }(),
			VerdictWorse, TimeSame, "diverged 0 → 1 of the 30 common runs", "in", "in"},
		{"one fewer run diverged", func() fakeRow { r := row("f", rmse, anees); r.div = divs; return r }(), row("f", rmse, anees),
			VerdictBetter, TimeSame, "diverged 1 → 0", "in", "in"},
		{"ANEES leaves its bounds", row("g", rmse, anees), row("g", rmse, scaled(anees, 1.3)), VerdictWorse, TimeSame, "ANEES left its bounds (in → high)", "in", "high"},
		{"ANEES enters its bounds", row("h", rmse, scaled(anees, 0.7)), row("h", rmse, anees), VerdictBetter, TimeSame, "now inside its bounds (low → in)", "low", "in"},
		{"high on both, further out", row("i", rmse, scaled(anees, 2)), row("i", rmse, wobble(anees, 6)), VerdictWorse, TimeSame, "high on both sides", "high", "high"},
		{"high on both, closer", row("j", rmse, scaled(anees, 6)), row("j", rmse, wobble(anees, 2)), VerdictBetter, TimeSame, "high on both sides", "high", "high"},
		{"low on both, further out", row("k", rmse, scaled(anees, 0.8)), row("k", rmse, wobble(anees, 0.5)), VerdictWorse, TimeSame, "low on both sides", "low", "low"},
		{"crossed, further", row("l", rmse, scaled(anees, 1.2)), row("l", rmse, scaled(anees, 0.3)), VerdictWorse, TimeSame, "crossed its bounds (high → low), further", "high", "low"},
		{"better rmse but ANEES leaves: worse wins", row("m", rmse, anees), row("m", wobble(rmse, 0.8), scaled(anees, 1.3)), VerdictWorse, TimeSame, "ANEES left", "in", "high"},
		{"slower only", row("n", rmse, anees), func() fakeRow { r := row("n", rmse, anees); r.ns = 1300; return r }(), VerdictSame, TimeSlower, "", "in", "in"},
		{"faster within tolerance", row("o", rmse, anees), func() fakeRow { r := row("o", rmse, anees); r.ns = 810; return r }(), VerdictSame, TimeSame, "", "in", "in"},
		{"faster", row("p", rmse, anees), func() fakeRow { r := row("p", rmse, anees); r.ns = 790; return r }(), VerdictSame, TimeFaster, "", "in", "in"},
		{"no longer applies", row("q", rmse, anees), fakeRow{problem: "ctrb", filter: "q", na: "q needs a linear model; ctrb is nonlinear"}, VerdictWorse, "", "no longer runs: q needs", "in", ""},
	}
	var bs, ns []fakeRow
	for _, c := range cases {
		bs, ns = append(bs, c.base), append(ns, c.cur)
	}
	ns = append(ns, row("only-new", rmse, anees))
	bs = append(bs, row("only-base", rmse, anees))
	base, cur := fakeDir("base", 3, bs...), fakeDir("new", 3, ns...)
	before := slices.Clone(base.Summary)
	c, err := Compare(base, cur, CompareOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if !c.Paired || len(c.Changes) != 0 {
		t.Errorf("paired %v, changes %q; want paired, no changes", c.Paired, c.Changes)
	}
	if len(c.Rows) != len(cases)+2 {
		t.Fatalf("%d rows, want %d", len(c.Rows), len(cases)+2)
	}
	for i, cs := range cases {
		r := c.Rows[i]
		why := strings.Join(r.Why, "; ")
		if r.Verdict != cs.want || r.TimeVerdict != cs.time || !strings.Contains(why, cs.whyHas) ||
			r.BaseMark != cs.baseMark || r.NewMark != cs.newMark {
			t.Errorf("%s: %s, time %q, marks %s → %s, why %q; want %s, time %q, marks %s → %s, why containing %q",
				cs.name, r.Verdict, r.TimeVerdict, r.BaseMark, r.NewMark, why, cs.want, cs.time, cs.baseMark, cs.newMark, cs.whyHas)
		}
		if cs.whyHas == "" && cs.want == VerdictSame && why != "" {
			t.Errorf("%s: why %q, want none", cs.name, why)
		}
	}
	if r := c.Rows[len(cases)]; r.Filter != "only-base" || r.Verdict != VerdictGone {
		t.Errorf("row %s: %s, want only-base gone", r.Filter, r.Verdict)
	}
	if r := c.Rows[len(cases)+1]; r.Filter != "only-new" || r.Verdict != VerdictNew {
		t.Errorf("row %s: %s, want only-new new", r.Filter, r.Verdict)
	}
	if r := c.Rows[0]; r.RMSEChange != 0 || r.RMSEChangeLo != 0 || r.RMSEChangeHi != 0 || r.BaseUsed != n || r.NewUsed != n {
		t.Errorf("identical: change %v [%v, %v], used %d %d; want exactly 0 and %d runs", r.RMSEChange, r.RMSEChangeLo, r.RMSEChangeHi, r.BaseUsed, r.NewUsed, n)
	}
	if r := c.Rows[4]; r.BaseUsed != n-1 || r.NewUsed != n-1 {
		t.Errorf("diverged run: used %d %d, want %d (the common completed runs)", r.BaseUsed, r.NewUsed, n-1)
	}
	if w, b := c.Count(VerdictWorse), c.Count(VerdictBetter); w != 8 || b != 4 {
		t.Errorf("%d worse, %d better; want 8 and 4", w, b)
	}
	for i := range before {
		if !sameSummaryRow(&before[i], &base.Summary[i]) {
			t.Errorf("Compare modified base summary row %d", i)
		}
	}
}

func sameSummaryRow(a, b *SummaryRow) bool {
	va, vb := summaryValues(a), summaryValues(b)
	for i := range va {
		if !sameFloat(va[i], vb[i]) {
			return false
		}
	}
	return a.Problem == b.Problem && a.Filter == b.Filter && a.Config == b.Config && a.Runs == b.Runs && a.Diverged == b.Diverged
}

// Folders of different seeds are refused unless allowed; then they are
// compared unpaired, and say so.
func TestCompareMismatch(t *testing.T) {
	const n = 40
	mk := func(seed, sha string, s uint64, rm []float64) *ResultDir {
		d := fakeDir(seed, s, fakeRow{problem: "ungm", filter: "ukf", rmse: rm, anees: spread(n, 1.5, 0.3, s+100), lo: 0.97, hi: 1.03, ns: 600})
		d.Manifest.SuiteSHA256 = sha
		return d
	}
	base := mk("base", "aa11", 1, spread(n, 7.8, 1.2, 21))
	cur := mk("new", "bb22", 2, spread(n, 7.9, 1.2, 22))
	_, err := Compare(base, cur, CompareOptions{})
	if !errors.Is(err, ErrMismatch) || !strings.Contains(err.Error(), "--allow-mismatch") {
		t.Fatalf("err = %v, want ErrMismatch naming --allow-mismatch", err)
	}
	c, err := Compare(base, cur, CompareOptions{AllowMismatch: true})
	if err != nil {
		t.Fatal(err)
	}
	r := c.Rows[0]
	if c.Paired || r.Verdict != VerdictSame || len(r.Why) != 0 {
		t.Errorf("paired %v, verdict %s, why %q; want unpaired, same", c.Paired, r.Verdict, r.Why)
	}
	if !slices.Contains(c.Changes, "seed: 1 → 2") || !slices.Contains(c.Changes, "suite sha256: aa11 → bb22") {
		t.Errorf("changes %q", c.Changes)
	}
	// The unpaired interval of a 1.3% rise from 40 runs spreading 15% is
	// wide: about ±2·0.15·sqrt(2/40)/2 for the rmse (half the relative
	// spread of the mse), so it covers zero.
	if !(r.RMSEChangeLo < 0 && r.RMSEChangeHi > 0) || r.RMSEChangeHi-r.RMSEChangeLo < 0.05 {
		t.Errorf("unpaired interval [%v, %v], want a wide one covering zero", r.RMSEChangeLo, r.RMSEChangeHi)
	}
	// Same seed, other suite (an entry added): allowed with the flag and
	// still paired, since run r's data depend on the seed and problem only.
	cur2 := mk("new", "bb22", 1, spread(n, 7.9, 1.2, 22))
	if c, err := Compare(base, cur2, CompareOptions{AllowMismatch: true}); err != nil || !c.Paired {
		t.Errorf("same seed, other suite: paired %v, err %v; want paired", c != nil && c.Paired, err)
	}
}

// Unpaired divergence is judged by the interval of the diverged fractions:
// one more diverged run of 40 is chance, twelve are not.
func TestCompareUnpairedDivergence(t *testing.T) {
	const n = 40
	rm, an := spread(n, 3, 0.3, 31), spread(n, 2, 0.2, 32)
	mk := func(seed uint64, k int) *ResultDir {
		div := make([]bool, n)
		for i := 0; i < k; i++ {
			div[3*i] = true
		}
		return fakeDir("d", seed, fakeRow{problem: "p", filter: "f", rmse: rm, anees: an, div: div, lo: 1.9, hi: 2.1, ns: 10})
	}
	for _, c := range []struct {
		base, cur int
		want      string
	}{{0, 1, VerdictSame}, {0, 12, VerdictWorse}, {12, 0, VerdictBetter}} {
		cmp, err := Compare(mk(1, c.base), mk(2, c.cur), CompareOptions{AllowMismatch: true})
		if err != nil {
			t.Fatal(err)
		}
		if r := cmp.Rows[0]; r.Verdict != c.want {
			t.Errorf("diverged %d → %d unpaired: %s (%q), want %s", c.base, c.cur, r.Verdict, r.Why, c.want)
		}
	}
}

func TestComparisonFormats(t *testing.T) {
	const n = 12
	rm, an := spread(n, 8.7, 0.5, 41), spread(n, 4, 0.3, 42)
	base := fakeDir("nightly/2031-05-01", 1,
		fakeRow{problem: "cv2d", filter: "kf", rmse: rm, anees: an, lo: 3.6, hi: 4.4, ns: 1489},
		fakeRow{problem: "cv2d", filter: "pf", config: "particles=500", rmse: scaled(rm, 1.2), anees: scaled(an, 3), lo: 3.6, hi: 4.4, ns: 85000},
		fakeRow{problem: "ungm", filter: "kf", na: "kf needs a linear model; ungm is nonlinear"},
	)
	cur := fakeDir("nightly/2031-05-02", 1,
		fakeRow{problem: "cv2d", filter: "kf", rmse: rm, anees: an, lo: 3.6, hi: 4.4, ns: 1502},
		fakeRow{problem: "cv2d", filter: "pf", config: "particles=500", rmse: scaled(rm, 1.5), anees: scaled(an, 3.1), lo: 3.6, hi: 4.4, ns: 120000},
		fakeRow{problem: "ungm", filter: "kf", na: "kf needs a linear model; ungm is nonlinear"},
	)
	cur.Manifest.Version = "v0.0.1-test"
	c, err := Compare(base, cur, CompareOptions{})
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range []struct{ format, golden string }{
		{"table", "compare.table.txt"}, {"markdown", "compare.markdown.md"}, {"json", "compare.json"},
	} {
		var b strings.Builder
		if err := WriteComparison(&b, f.format, c); err != nil {
			t.Fatal(err)
		}
		checkGolden(t, f.golden, []byte(b.String()))
	}
	var b strings.Builder
	if err := WriteComparison(&b, "json", c); err != nil {
		t.Fatal(err)
	}
	dec := json.NewDecoder(strings.NewReader(b.String()))
	dec.Token() // [
	dec.Token() // {
	var keys []string
	for dec.More() {
		tok, _ := dec.Token()
		keys = append(keys, tok.(string))
		var v any
		dec.Decode(&v)
	}
	if !slices.Equal(keys, CompareColumns) {
		t.Errorf("json keys %q, want CompareColumns %q", keys, CompareColumns)
	}
	var rows []map[string]any
	if err := json.Unmarshal([]byte(b.String()), &rows); err != nil {
		t.Fatal(err)
	}
	if rows[1]["verdict"] != "worse" || rows[1]["time_verdict"] != "slower" || rows[2]["rmse_change"] != nil {
		t.Errorf("json rows %v", rows)
	}
	if err := WriteComparison(&b, "csv", c); err == nil || !strings.Contains(err.Error(), "table, markdown, json") {
		t.Errorf("unknown format: %v", err)
	}
}

// ReadResultDir names what is missing or broken.
func TestReadResultDirErrors(t *testing.T) {
	dir := t.TempDir()
	if _, err := ReadResultDir(filepath.Join(dir, "absent")); err == nil || !strings.Contains(err.Error(), "absent") {
		t.Errorf("missing folder: %v", err)
	}
	if _, err := ReadResultDir(dir); err == nil || !strings.Contains(err.Error(), "manifest.json") {
		t.Errorf("no manifest: %v", err)
	}
	if err := WriteManifest(filepath.Join(dir, "manifest.json"), Manifest{Suite: "s", Seed: 1}); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "summary.parquet"), []byte("PAR1 not really"), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := ReadResultDir(dir); err == nil || !strings.Contains(err.Error(), "summary.parquet") {
		t.Errorf("corrupt summary: %v", err)
	}
	if err := WriteSummaryParquet(filepath.Join(dir, "summary.parquet"), fixtureRows()); err != nil {
		t.Fatal(err)
	}
	if _, err := ReadResultDir(dir); err == nil || !strings.Contains(err.Error(), "runs.parquet") {
		t.Errorf("no runs: %v", err)
	}
	w, err := NewRunsWriter(filepath.Join(dir, "runs.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	d, err := ReadResultDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	// The summary says the pairs ran, runs.parquet has none of them.
	if _, err := Compare(d, d, CompareOptions{}); err == nil || !strings.Contains(err.Error(), "runs.parquet: no runs of") {
		t.Errorf("summary without runs: %v", err)
	}
}

// Unpaired, ANEES leaving its bounds counts only when its change is beyond
// chance: one run of 40 with a collapsed covariance (ANEES 275, as a
// particle filter can give) lifts the mean ANEES far above its bounds but
// the geometric mean by about 15% (log 275 / 40), inside the interval of
// two samples whose log ANEES spread by 0.3; every run's ANEES tripled is
// a real change.
func TestCompareUnpairedConsistency(t *testing.T) {
	const n = 40
	rm := spread(n, 5, 0.5, 51)
	la := spread(n, 0, 0.3, 52)
	an := make([]float64, n)
	for i := range an {
		an[i] = math.Exp(la[i])
	}
	mk := func(seed uint64, a []float64) *ResultDir {
		return fakeDir("d", seed, fakeRow{problem: "ungm", filter: "pf", config: "particles=300", rmse: rm, anees: a, lo: 0.9, hi: 1.15, ns: 1e4})
	}
	outlier := slices.Clone(an)
	outlier[7] = 275
	for _, c := range []struct {
		name   string
		cur    []float64
		want   string
		whyHas string
	}{
		{"one collapsed run", outlier, VerdictSame, "ANEES left its bounds (in → high), but ANEES +"},
		{"tripled", scaled(an, 3), VerdictWorse, "ANEES left its bounds (in → high)"},
	} {
		cmp, err := Compare(mk(1, an), mk(2, c.cur), CompareOptions{AllowMismatch: true})
		if err != nil {
			t.Fatal(err)
		}
		r := cmp.Rows[0]
		if why := strings.Join(r.Why, "; "); r.Verdict != c.want || r.NewMark != "high" || !strings.Contains(why, c.whyHas) {
			t.Errorf("%s: %s (marks %s → %s), why %q; want %s, containing %q", c.name, r.Verdict, r.BaseMark, r.NewMark, why, c.want, c.whyHas)
		}
	}
	// Paired, the same collapsed run is the rule of the brief: worse.
	cmp, err := Compare(mk(1, an), mk(1, outlier), CompareOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if r := cmp.Rows[0]; r.Verdict != VerdictWorse {
		t.Errorf("paired collapsed run: %s, want worse", r.Verdict)
	}
}
