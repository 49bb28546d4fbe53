package metrics

import (
	"math"
	"math/rand/v2"
	"reflect"
	"slices"
	"strings"
	"testing"
)

var nan = math.NaN()

func same(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) }

func near(a, b, tol float64) bool { return math.Abs(a-b) <= tol }

// handTraces are four runs of two steps (nx = nz = 1) whose metrics are
// worked by hand in TestAccumulatorHandWorked. Run 2 diverged at step 2; its
// values must be ignored.
func handTraces() []RunTrace {
	return []RunTrace{
		{Run: 0, SqErr: []float64{1, 3}, NEES: []float64{0.5, 5}, NIS: []float64{1, nan}, NsPerStep: 10},
		{Run: 1, SqErr: []float64{2, 2}, NEES: []float64{1, 4}, NIS: []float64{nan, nan}, NsPerStep: 30},
		{Run: 2, SqErr: []float64{100, nan}, NEES: []float64{100, nan}, NIS: []float64{100, nan}, NsPerStep: 1000,
			Diverged: true, DivStep: 2, Reason: "NaN estimate"},
		{Run: 3, SqErr: []float64{0, 4}, NEES: []float64{2, 4}, NIS: []float64{3, 6}, NsPerStep: 20},
	}
}

// The chi-square quantiles used here are from the NIST/SEMATECH
// e-Handbook §1.3.6.7.4 table (quoted from memory, cross-checked with SciPy
// 1.10.1), so the expected bounds are known to three decimals independently
// of ChiSquareBounds.
func TestAccumulatorHandWorked(t *testing.T) {
	acc := NewAccumulator(2, 1, 1)
	for _, tr := range handTraces() {
		acc.Add(&tr)
	}
	s := acc.Summary(1)

	if s.Runs != 4 || s.Diverged != 1 {
		t.Errorf("Runs %d Diverged %d, want 4, 1", s.Runs, s.Diverged)
	}
	// Three usable runs × two steps: squared errors 1+3+2+2+0+4 = 12 over 6.
	if !near(s.RMSE, math.Sqrt2, 1e-15) {
		t.Errorf("RMSE %v, want sqrt(2)", s.RMSE)
	}
	// Every usable run has mean squared error 2, so every resample has RMSE
	// sqrt(2) and so has the interval.
	if !near(s.RMSELo, math.Sqrt2, 1e-15) || !near(s.RMSEHi, math.Sqrt2, 1e-15) {
		t.Errorf("RMSE interval [%v, %v], want [sqrt 2, sqrt 2]", s.RMSELo, s.RMSEHi)
	}
	// NEES: (0.5+1+2 + 5+4+4)/6 = 2.75; bounds χ²_6/6: [1.237/6, 14.449/6].
	if !near(s.ANEES, 2.75, 1e-15) {
		t.Errorf("ANEES %v, want 2.75", s.ANEES)
	}
	if !near(s.ANEESLo, 1.237/6, 0.0005/6) || !near(s.ANEESHi, 14.449/6, 0.0005/6) {
		t.Errorf("ANEES bounds [%v, %v], want [1.237/6, 14.449/6]", s.ANEESLo, s.ANEESHi)
	}
	// Per-step averages 3.5/3 = 1.167 (inside χ²_3/3 = [0.072, 3.116]) and
	// 13/3 = 4.333 (outside): one step of two.
	if s.NEESInBounds != 0.5 {
		t.Errorf("NEESInBounds %v, want 0.5", s.NEESInBounds)
	}
	// NIS pairs with a measurement: 1, 3 (step 1) and 6 (step 2): 10/3;
	// bounds χ²_3/3 = [0.216/3, 9.348/3]. Step 1 average 2 is inside χ²_2/2
	// = [0.0253, 3.689]; step 2 average 6 is outside χ²_1 = [0.001, 5.024].
	if !near(s.ANIS, 10.0/3, 1e-15) {
		t.Errorf("ANIS %v, want 10/3", s.ANIS)
	}
	if !near(s.ANISLo, 0.216/3, 0.0005/3) || !near(s.ANISHi, 9.348/3, 0.0005/3) {
		t.Errorf("ANIS bounds [%v, %v], want [0.216/3, 9.348/3]", s.ANISLo, s.ANISHi)
	}
	if s.NISInBounds != 0.5 {
		t.Errorf("NISInBounds %v, want 0.5", s.NISInBounds)
	}
	// Median of 10, 30, 20 (the diverged run's 1000 excluded).
	if s.NsPerStep != 20 {
		t.Errorf("NsPerStep %v, want 20", s.NsPerStep)
	}
	if !math.IsNaN(s.MeanESS) {
		t.Errorf("MeanESS %v, want NaN without ESS", s.MeanESS)
	}
	want := []string{
		"1 of 4 runs diverged (first: run 2, step 2: NaN estimate), the metrics use the other 3",
		"bounds from 3 runs are loose: use --runs 20 or more",
	}
	if !slices.Equal(s.Warnings, want) {
		t.Errorf("Warnings\n%q\nwant\n%q", s.Warnings, want)
	}

	c := acc.Curves()
	if len(c) != 2 {
		t.Fatalf("%d curve points, want 2", len(c))
	}
	// Step 1: sqrt((1+2+0)/3) = 1; step 2: sqrt((3+2+4)/3) = sqrt(3).
	if c[0].Step != 1 || c[1].Step != 2 || !near(c[0].RMSE, 1, 1e-15) || !near(c[1].RMSE, math.Sqrt(3), 1e-15) {
		t.Errorf("curve RMSE %+v", c)
	}
	if !near(c[0].ANEES, 3.5/3, 1e-15) || !near(c[1].ANEES, 13.0/3, 1e-15) ||
		!near(c[0].ANEESLo, 0.216/3, 0.0005/3) || !near(c[0].ANEESHi, 9.348/3, 0.0005/3) || c[1].ANEESHi != c[0].ANEESHi {
		t.Errorf("curve NEES %+v", c)
	}
	if c[0].ANIS != 2 || c[1].ANIS != 6 || c[0].NISRuns != 2 || c[1].NISRuns != 1 ||
		!near(c[0].ANISHi, 7.378/2, 0.0005/2) || !near(c[1].ANISHi, 5.024, 0.0005) {
		t.Errorf("curve NIS %+v", c)
	}
	if c[0].Runs != 3 || c[1].Runs != 3 {
		t.Errorf("curve Runs %d, %d, want 3", c[0].Runs, c[1].Runs)
	}
}

func TestAccumulatorESSAndMissingNIS(t *testing.T) {
	acc := NewAccumulator(3, 2, 1)
	acc.Add(&RunTrace{Run: 1, SqErr: []float64{1, 1, 1}, NEES: []float64{2, 2, 2}, ESS: []float64{10, 20, 30}, NsPerStep: 5})
	acc.Add(&RunTrace{Run: 2, SqErr: []float64{1, 1, 1}, NEES: []float64{2, 2, 2}, ESS: []float64{40, 50, 60}, NsPerStep: 7})
	s := acc.Summary(0)
	// Mean of 10..60: 35; median of 5 and 7: 6.
	if s.MeanESS != 35 || s.NsPerStep != 6 {
		t.Errorf("MeanESS %v NsPerStep %v, want 35, 6", s.MeanESS, s.NsPerStep)
	}
	// No NIS at all: every NIS metric NaN.
	if !math.IsNaN(s.ANIS) || !math.IsNaN(s.ANISLo) || !math.IsNaN(s.ANISHi) || !math.IsNaN(s.NISInBounds) {
		t.Errorf("ANIS %v [%v, %v] in %v, want NaN", s.ANIS, s.ANISLo, s.ANISHi, s.NISInBounds)
	}
	for _, p := range acc.Curves() {
		if !math.IsNaN(p.ANIS) || p.NISRuns != 0 {
			t.Errorf("step %d: ANIS %v from %d runs, want NaN from 0", p.Step, p.ANIS, p.NISRuns)
		}
	}
}

func TestAccumulatorAllDiverged(t *testing.T) {
	acc := NewAccumulator(2, 1, 1)
	acc.Add(&RunTrace{Run: 0, Diverged: true, DivStep: 1, Reason: "panic: index out of range\ngoroutine 7 [running]:"})
	acc.Add(&RunTrace{Run: 1, Diverged: true, DivStep: 2, Reason: "covariance not positive definite"})
	s := acc.Summary(0)
	for name, v := range map[string]float64{"RMSE": s.RMSE, "RMSELo": s.RMSELo, "ANEES": s.ANEES, "ANEESLo": s.ANEESLo,
		"NEESInBounds": s.NEESInBounds, "ANIS": s.ANIS, "NsPerStep": s.NsPerStep, "MeanESS": s.MeanESS} {
		if !math.IsNaN(v) {
			t.Errorf("%s = %v, want NaN", name, v)
		}
	}
	want := []string{"2 of 2 runs diverged (first: run 0, step 1: panic: index out of range), no run is left, so every metric is NaN: fix the divergence first"}
	if s.Runs != 2 || s.Diverged != 2 || !slices.Equal(s.Warnings, want) {
		t.Errorf("Runs %d Diverged %d Warnings %q", s.Runs, s.Diverged, s.Warnings)
	}
	if c := acc.Curves(); c[0].Runs != 0 || !math.IsNaN(c[0].RMSE) || !math.IsNaN(c[0].ANEESLo) {
		t.Errorf("curve %+v, want NaN from 0 runs", c[0])
	}

	empty := NewAccumulator(2, 1, 1).Summary(0)
	if !math.IsNaN(empty.RMSE) || !slices.Equal(empty.Warnings, []string{"no runs were added, every metric is NaN"}) {
		t.Errorf("empty: RMSE %v Warnings %q", empty.RMSE, empty.Warnings)
	}

	one := NewAccumulator(1, 1, 0)
	one.Add(&RunTrace{Run: 0, SqErr: []float64{4}, NEES: []float64{1}})
	s = one.Summary(0)
	if s.RMSE != 2 || !math.IsNaN(s.RMSELo) || len(s.Warnings) != 2 || s.Warnings[1] != "the RMSE interval needs at least 2 runs: use --runs 20 or more" {
		t.Errorf("one run: RMSE %v [%v, %v] Warnings %q", s.RMSE, s.RMSELo, s.RMSEHi, s.Warnings)
	}
}

// chi2Draw returns a χ²_n variate as the sum of n squared standard normals
// (the definition of the chi-square distribution).
func chi2Draw(rng *rand.Rand, n int) float64 {
	var s float64
	for range n {
		z := rng.NormFloat64()
		s += z * z
	}
	return s
}

// consistentRuns feeds M runs of K steps whose NEES values are exact χ²_nx
// draws and NIS values exact χ²_nz draws, missing with probability miss,
// scaled by scale (1 = a consistent estimator).
func consistentRuns(M, K, nx, nz int, miss, scale float64, seed uint64) *Accumulator {
	rng := rand.New(rand.NewPCG(seed, 1))
	acc := NewAccumulator(K, nx, nz)
	tr := RunTrace{SqErr: make([]float64, K), NEES: make([]float64, K), NIS: make([]float64, K), PredSqErr: make([]float64, K)}
	for r := range M {
		tr.Run = r
		for k := range K {
			tr.SqErr[k] = chi2Draw(rng, nx)
			tr.NEES[k] = scale * chi2Draw(rng, nx)
			// With S = I the squared innovation norm is the NIS of the
			// consistent filter, before the scale.
			tr.PredSqErr[k] = chi2Draw(rng, nz)
			tr.NIS[k] = scale * tr.PredSqErr[k]
			if rng.Float64() < miss {
				tr.NIS[k], tr.PredSqErr[k] = nan, nan
			}
		}
		acc.Add(&tr)
	}
	return acc
}

// A consistent estimator's NEES is χ²_nx at every step (Bar-Shalom, Li &
// Kirubarajan 2001, §5.4.2), so its ANEES lies inside the 95% bounds with
// probability 0.95 (with this fixed seed it does), and the number of the K
// steps whose run average is inside its own 95% bounds is Binomial(K, 0.95),
// the steps being independent here.
//
// Tolerances from that binomial (tails from SciPy 1.10.1 scipy.stats.binom):
// K = 50: P(X ≤ 41) = 7.6e-4, so we require X ≥ 42 (fraction ≥ 0.84);
// K = 1000: sd = sqrt(0.95·0.05/1000) = 0.0069, and we require
// 923 ≤ X ≤ 977 (±4 sd; P(outside) = 1.0e-4), which fails for bounds at
// the wrong level (a 90% or 99% region gives 0.90 or 0.99).
func TestAccumulatorConsistentEstimator(t *testing.T) {
	s := consistentRuns(100, 50, 2, 1, 0, 1, 1).Summary(0)
	if !(s.ANEES >= s.ANEESLo && s.ANEES <= s.ANEESHi) {
		t.Errorf("ANEES %v outside [%v, %v]", s.ANEES, s.ANEESLo, s.ANEESHi)
	}
	if s.NEESInBounds < 0.84 {
		t.Errorf("NEESInBounds %v from 50 steps, want >= 0.84", s.NEESInBounds)
	}

	// NIS missing at 30% of (run, step) pairs: each step's bounds use its own
	// count of measurements.
	s = consistentRuns(100, 1000, 2, 1, 0.3, 1, 2).Summary(0)
	if !(s.ANEES >= s.ANEESLo && s.ANEES <= s.ANEESHi) || !(s.ANIS >= s.ANISLo && s.ANIS <= s.ANISHi) {
		t.Errorf("ANEES %v [%v, %v], ANIS %v [%v, %v]: want inside", s.ANEES, s.ANEESLo, s.ANEESHi, s.ANIS, s.ANISLo, s.ANISHi)
	}
	if s.NEESInBounds < 0.923 || s.NEESInBounds > 0.977 || s.NISInBounds < 0.923 || s.NISInBounds > 0.977 {
		t.Errorf("in bounds NEES %v NIS %v from 1000 steps, want in [0.923, 0.977]", s.NEESInBounds, s.NISInBounds)
	}

	// An overconfident estimator (covariance too small by 1.25): the run
	// average of 100 NEES has mean 2.5 and sd 0.25 against an upper bound
	// χ²_200(0.975)/100 = 2.41, so about 36% of steps are inside.
	s = consistentRuns(100, 1000, 2, 1, 0.3, 1.25, 3).Summary(0)
	if s.ANEES <= s.ANEESHi || s.ANIS <= s.ANISHi {
		t.Errorf("overconfident: ANEES %v (hi %v) ANIS %v (hi %v), want above", s.ANEES, s.ANEESHi, s.ANIS, s.ANISHi)
	}
	if s.NEESInBounds > 0.5 {
		t.Errorf("overconfident: NEESInBounds %v, want about 0.36", s.NEESInBounds)
	}
}

func TestAccumulatorDeterministicAndKeepsNoSlices(t *testing.T) {
	a := consistentRuns(30, 20, 3, 2, 0.2, 1, 9)
	b := consistentRuns(30, 20, 3, 2, 0.2, 1, 9)
	sa, sb := a.Summary(5), b.Summary(5)
	if !sameSummary(sa, sb) || !sameSummary(sa, a.Summary(5)) {
		t.Errorf("same runs gave\n%+v\n%+v", sa, sb)
	}
	if !reflect.DeepEqual(a.Curves(), b.Curves()) {
		t.Error("same runs gave different curves")
	}
	if other := a.Summary(6); other.RMSELo == sa.RMSELo && other.RMSEHi == sa.RMSEHi {
		t.Error("bootstrap seeds 5 and 6 gave the same RMSE interval")
	}

	// consistentRuns reused one trace for every run; overwriting it now must
	// not change what was accumulated.
	tr := handTraces()
	acc := NewAccumulator(2, 1, 1)
	for i := range tr {
		acc.Add(&tr[i])
	}
	before := acc.Summary(1)
	for i := range tr {
		for k := range 2 {
			tr[i].SqErr[k], tr[i].NEES[k], tr[i].NIS[k] = -1, -1, -1
		}
	}
	if after := acc.Summary(1); !sameSummary(before, after) {
		t.Errorf("Summary changed after the traces were overwritten:\n%+v\n%+v", before, after)
	}
}

func sameSummary(a, b Summary) bool {
	fa, fb := reflect.ValueOf(a), reflect.ValueOf(b)
	for i := range fa.NumField() {
		x, y := fa.Field(i), fb.Field(i)
		switch x.Kind() {
		case reflect.Float64:
			if !same(x.Float(), y.Float()) {
				return false
			}
		default:
			if !reflect.DeepEqual(x.Interface(), y.Interface()) {
				return false
			}
		}
	}
	return true
}

func TestAccumulatorAddAllocs(t *testing.T) {
	const K = 100
	tr := RunTrace{SqErr: make([]float64, K), NEES: make([]float64, K), NIS: make([]float64, K), ESS: make([]float64, K)}
	acc := NewAccumulator(K, 4, 2)
	acc.Grow(200)
	r := 0
	add := func() { tr.Run = r; r++; acc.Add(&tr) }
	// One Add at a time: AllocsPerRun truncates the mean to an integer, so
	// over many runs it would hide the rare allocation of a growing slice.
	for range 100 { // 200 Adds: AllocsPerRun(1, f) calls f twice
		if n := testing.AllocsPerRun(1, add); n != 0 {
			t.Fatalf("Add after Grow, run %d: %v allocs, want 0", r, n)
		}
	}
	// Without Grow the per-run slices grow geometrically: well under one
	// allocation per Add on average.
	acc = NewAccumulator(K, 4, 2)
	r = 0
	if n := testing.AllocsPerRun(1000, add); n >= 1 {
		t.Errorf("Add without Grow: %v allocs per run, want < 1", n)
	}
	d := RunTrace{Diverged: true, DivStep: 3, Reason: "NaN estimate"}
	if n := testing.AllocsPerRun(100, func() { d.Run = r; r++; acc.Add(&d) }); n != 0 {
		t.Errorf("Add of a diverged run: %v allocs, want 0", n)
	}
	if n := testing.AllocsPerRun(100, func() { RunStatOf(&tr) }); n != 0 {
		t.Errorf("RunStatOf: %v allocs, want 0", n)
	}
}

func TestAccumulatorPanics(t *testing.T) {
	cases := map[string]func(){
		"short SqErr": func() {
			NewAccumulator(2, 1, 1).Add(&RunTrace{SqErr: []float64{1}, NEES: []float64{1, 1}})
		},
		"short NIS": func() {
			NewAccumulator(2, 1, 1).Add(&RunTrace{SqErr: []float64{1, 1}, NEES: []float64{1, 1}, NIS: []float64{1}})
		},
		"out of order": func() {
			a := NewAccumulator(1, 1, 0)
			a.Add(&RunTrace{Run: 3, SqErr: []float64{1}, NEES: []float64{1}})
			a.Add(&RunTrace{Run: 2, SqErr: []float64{1}, NEES: []float64{1}})
		},
		"zero steps": func() { NewAccumulator(0, 1, 0) },
	}
	for name, f := range cases {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("%s: no panic", name)
				}
			}()
			f()
		}()
	}
}

func TestRunStatOf(t *testing.T) {
	tr := handTraces()
	// Run 3: SqErr 0, 4 -> sqrt(2); NEES 2, 4 -> 3; NIS 3, 6 -> 4.5.
	got := RunStatOf(&tr[3])
	want := RunStat{Run: 3, RMSE: math.Sqrt2, ANEES: 3, ANIS: 4.5, NsPerStep: 20, MeanESS: nan}
	if got.Run != want.Run || got.Diverged || !near(got.RMSE, want.RMSE, 1e-15) || got.ANEES != 3 || got.ANIS != 4.5 ||
		got.NsPerStep != 20 || !math.IsNaN(got.MeanESS) {
		t.Errorf("RunStatOf run 3 = %+v, want %+v", got, want)
	}
	// Run 1 has no measurement: ANIS NaN.
	if got := RunStatOf(&tr[1]); !math.IsNaN(got.ANIS) || got.ANEES != 2.5 {
		t.Errorf("RunStatOf run 1 = %+v, want ANIS NaN, ANEES 2.5", got)
	}
	// Run 2 diverged: metrics NaN, the rest copied.
	got = RunStatOf(&tr[2])
	if !got.Diverged || got.DivStep != 2 || got.Reason != "NaN estimate" || got.NsPerStep != 1000 ||
		!math.IsNaN(got.RMSE) || !math.IsNaN(got.ANEES) || !math.IsNaN(got.ANIS) {
		t.Errorf("RunStatOf diverged = %+v", got)
	}
	esst := RunTrace{SqErr: []float64{1}, NEES: []float64{1}, ESS: []float64{100, 300}}
	if got := RunStatOf(&esst); got.MeanESS != 200 {
		t.Errorf("MeanESS %v, want 200", got.MeanESS)
	}
}

func BenchmarkAccumulatorAdd(b *testing.B) {
	const K = 1000
	rng := rand.New(rand.NewPCG(1, 2))
	tr := RunTrace{SqErr: make([]float64, K), NEES: make([]float64, K), NIS: make([]float64, K)}
	for k := range K {
		tr.SqErr[k], tr.NEES[k], tr.NIS[k] = rng.Float64(), rng.Float64(), rng.Float64()
	}
	acc := NewAccumulator(K, 4, 2)
	acc.Grow(b.N) // the per-run slices, sized once as the runner would
	b.ReportAllocs()
	b.ResetTimer()
	for r := range b.N {
		tr.Run = r
		acc.Add(&tr)
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*K), "ns/step")
}

func BenchmarkAccumulatorSummary(b *testing.B) {
	acc := consistentRuns(1000, 100, 4, 2, 0.1, 1, 1)
	b.ReportAllocs()
	for b.Loop() {
		acc.Summary(1)
	}
}

// Covariance repairs are summed over every run, diverged ones included, and
// produce a warning naming how many runs needed them.
func TestAccumulatorRepairs(t *testing.T) {
	a := NewAccumulator(2, 1, 1)
	for r, rep := range []int{0, 3, 0, 2} {
		a.Add(&RunTrace{Run: r, SqErr: []float64{1, 1}, NEES: []float64{1, 1}, Repairs: rep, Diverged: r == 3, DivStep: 1, Reason: "x"})
	}
	s := a.Summary(1)
	if s.Repairs != 5 {
		t.Fatalf("repairs %d, want 5", s.Repairs)
	}
	found := false
	for _, w := range s.Warnings {
		if strings.HasPrefix(w, "the covariance needed 5 jitter repairs in 2 of 4 runs") {
			found = true
		}
	}
	if !found {
		t.Fatalf("no repair warning in %q", s.Warnings)
	}
	if st := RunStatOf(&RunTrace{Run: 0, Repairs: 4, SqErr: []float64{1}, NEES: []float64{1}}); st.Repairs != 4 {
		t.Fatalf("RunStat repairs %d", st.Repairs)
	}
}

// For a consistent filter E‖ν‖² = tr S (Bar-Shalom, Li & Kirubarajan 2001,
// §5.4); consistentRuns has S = I with nz = 1, so ‖ν‖² is χ²_1 with mean 1
// and variance 2. Over about 0.7·100·1000 = 70000 values the mean has sd
// sqrt(2/70000) = 0.0053; PredRMSE² must be within 4 sd (0.021) of 1.
func TestAccumulatorPredRMSE(t *testing.T) {
	a := consistentRuns(100, 1000, 2, 1, 0.3, 1, 3)
	s := a.Summary(0)
	if d := s.PredRMSE*s.PredRMSE - 1; math.Abs(d) > 0.021 {
		t.Errorf("PredRMSE² = %v, want 1 ± 0.021", s.PredRMSE*s.PredRMSE)
	}
	// Hand-worked: two runs of two steps, values 1, NaN and 4, 9: the
	// mean over the three values is 14/3; step 2 has sqrt(9) = 3.
	b := NewAccumulator(2, 1, 1)
	b.Add(&RunTrace{Run: 0, SqErr: []float64{0, 0}, NEES: []float64{1, 1}, PredSqErr: []float64{1, nan}})
	b.Add(&RunTrace{Run: 1, SqErr: []float64{0, 0}, NEES: []float64{1, 1}, PredSqErr: []float64{4, 9}})
	if got, want := b.Summary(0).PredRMSE, math.Sqrt(14.0/3); !near(got, want, 1e-15) {
		t.Errorf("hand-worked PredRMSE = %v, want %v", got, want)
	}
	if c := b.Curves(); !near(c[0].PredRMSE, math.Sqrt(2.5), 1e-15) || c[1].PredRMSE != 3 {
		t.Errorf("curve PredRMSE = %v, %v, want sqrt(2.5), 3", c[0].PredRMSE, c[1].PredRMSE)
	}
	if got := RunStatOf(&RunTrace{PredSqErr: []float64{1, nan, 4}}).PredRMSE; !near(got, math.Sqrt(2.5), 1e-15) {
		t.Errorf("RunStatOf PredRMSE = %v, want sqrt(2.5)", got)
	}
}

// Without truth RMSE and ANEES are NaN, never made up, and the ANIS bounds
// are those of one run's measurements: ChiSquareBounds(m·nz, m) with m the
// steps with a measurement, here every one of K = 40.
func TestAccumulatorNoTruth(t *testing.T) {
	const K = 40
	a := NewAccumulator(K, 2, 1)
	a.NoTruth = true
	tr := RunTrace{SqErr: make([]float64, K), NEES: make([]float64, K), NIS: make([]float64, K), PredSqErr: make([]float64, K)}
	for k := range K {
		tr.SqErr[k], tr.NEES[k], tr.NIS[k], tr.PredSqErr[k] = nan, nan, 1, 4
	}
	for r := range 3 { // fewer than 10 runs: no warning about loose bounds, which do not depend on them
		tr.Run = r
		a.Add(&tr)
	}
	s := a.Summary(0)
	for name, v := range map[string]float64{"RMSE": s.RMSE, "RMSELo": s.RMSELo, "RMSEHi": s.RMSEHi, "ANEES": s.ANEES,
		"ANEESLo": s.ANEESLo, "ANEESHi": s.ANEESHi, "NEESInBounds": s.NEESInBounds} {
		if !math.IsNaN(v) {
			t.Errorf("%s = %v without truth, want NaN", name, v)
		}
	}
	lo, hi := ChiSquareBounds(K, K, 0.95)
	if s.ANIS != 1 || s.ANISLo != lo || s.ANISHi != hi || s.PredRMSE != 2 {
		t.Errorf("ANIS %v [%v, %v] PredRMSE %v, want 1 [%v, %v] and 2", s.ANIS, s.ANISLo, s.ANISHi, s.PredRMSE, lo, hi)
	}
	if len(s.Warnings) != 1 || s.Warnings[0] != NoTruthWarning {
		t.Errorf("warnings %q, want only %q", s.Warnings, NoTruthWarning)
	}
	c := a.Curves()[0]
	lo1, hi1 := ChiSquareBounds(1, 1, 0.95)
	if !math.IsNaN(c.RMSE) || !math.IsNaN(c.ANEES) || !math.IsNaN(c.ANEESLo) || c.ANISLo != lo1 || c.ANISHi != hi1 {
		t.Errorf("curve %+v, want RMSE, ANEES and its bounds NaN, ANIS bounds [%v, %v]", c, lo1, hi1)
	}
}
