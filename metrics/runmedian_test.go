package metrics

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// ANEESRunMedian worked by hand: five runs of three steps, nx = 1.
//
//	run 0: step 2 not scored (SqErr NaN, its NEES 99 ignored): (1+3)/2   = 2
//	run 1: (0.5+1+1.5)/3                                                 = 1
//	run 2: diverged, ignored
//	run 3: a collapsed run, (2000+1000+3000)/3                           = 2000
//	run 4: (3+3+3)/3                                                     = 3
//
// The median of {2, 1, 2000, 3} is (2+3)/2 = 2.5, while ANEES, the mean
// over the 11 scored (run, step) pairs, is (4+3+6000+9)/11 = 6016/11,
// dominated by run 3.
func TestAccumulatorANEESRunMedianHandWorked(t *testing.T) {
	a := NewAccumulator(3, 1, 0)
	a.Grow(5)
	a.Add(&RunTrace{Run: 0, SqErr: []float64{1, nan, 1}, NEES: []float64{1, 99, 3}})
	a.Add(&RunTrace{Run: 1, SqErr: []float64{1, 1, 1}, NEES: []float64{0.5, 1, 1.5}})
	a.Add(&RunTrace{Run: 2, SqErr: []float64{1, nan, nan}, NEES: []float64{1e9, nan, nan}, Diverged: true, DivStep: 2, Reason: "NaN estimate"})
	a.Add(&RunTrace{Run: 3, SqErr: []float64{1, 1, 1}, NEES: []float64{2000, 1000, 3000}})
	a.Add(&RunTrace{Run: 4, SqErr: []float64{1, 1, 1}, NEES: []float64{3, 3, 3}})
	s := a.Summary(1)
	if s.ANEESRunMedian != 2.5 {
		t.Errorf("ANEESRunMedian %v, want 2.5", s.ANEESRunMedian)
	}
	if !near(s.ANEES, 6016.0/11, 1e-12) {
		t.Errorf("ANEES %v, want 6016/11", s.ANEES)
	}
	// The runs' own ANEES, as runs.parquet has them, give the same median.
	if st := RunStatOf(&RunTrace{SqErr: []float64{1, nan, 1}, NEES: []float64{1, 99, 3}}); st.ANEES != 2 {
		t.Errorf("RunStatOf ANEES %v, want 2", st.ANEES)
	}

	// The handTraces of TestAccumulatorHandWorked: runs 0, 1, 3 have ANEES
	// (0.5+5)/2 = 2.75, (1+4)/2 = 2.5, (2+4)/2 = 3; the median is 2.75.
	h := NewAccumulator(2, 1, 1)
	for _, tr := range handTraces() {
		h.Add(&tr)
	}
	if m := h.Summary(1).ANEESRunMedian; m != 2.75 {
		t.Errorf("handTraces: ANEESRunMedian %v, want 2.75", m)
	}

	// A run that scores no step has no ANEES and is left out of the median
	// (its mean over no steps is not a value); the others give (1+3)/2.
	u := NewAccumulator(2, 1, 0)
	u.Add(&RunTrace{Run: 0, SqErr: []float64{1, 1}, NEES: []float64{1, 1}})
	u.Add(&RunTrace{Run: 1, SqErr: []float64{nan, nan}, NEES: []float64{7, 7}})
	u.Add(&RunTrace{Run: 2, SqErr: []float64{1, 1}, NEES: []float64{2, 4}})
	if m := u.Summary(1).ANEESRunMedian; m != 2 {
		t.Errorf("a run without scored steps: ANEESRunMedian %v, want 2", m)
	}

	// A NaN NEES at a scored step of a run not marked diverged propagates,
	// as it does into ANEES (the runner marks such runs diverged).
	p := NewAccumulator(2, 1, 0)
	p.Add(&RunTrace{Run: 0, SqErr: []float64{1, 1}, NEES: []float64{1, nan}})
	p.Add(&RunTrace{Run: 1, SqErr: []float64{1, 1}, NEES: []float64{1, 1}})
	if s := p.Summary(1); !math.IsNaN(s.ANEES) || !math.IsNaN(s.ANEESRunMedian) {
		t.Errorf("NaN NEES: ANEES %v ANEESRunMedian %v, want NaN", s.ANEES, s.ANEESRunMedian)
	}
}

// ANEESRunMedian is NaN exactly where ANEES is: no truth, no step scored,
// no run left, no run added.
func TestAccumulatorANEESRunMedianNaN(t *testing.T) {
	tr := RunTrace{SqErr: []float64{1, 1}, NEES: []float64{1, 2}, NIS: []float64{1, 1}}
	cases := map[string]*Accumulator{}

	nt := NewAccumulator(2, 1, 1)
	nt.NoTruth = true
	nt.Add(&tr)
	cases["no truth"] = nt

	ns := NewAccumulator(2, 1, 1)
	ns.Add(&RunTrace{SqErr: []float64{nan, nan}, NEES: []float64{1, 2}})
	cases["no step scored"] = ns

	dv := NewAccumulator(2, 1, 1)
	dv.Add(&RunTrace{Diverged: true, DivStep: 1, Reason: "NaN estimate"})
	cases["all diverged"] = dv

	cases["no runs"] = NewAccumulator(2, 1, 1)

	for name, a := range cases {
		s := a.Summary(1)
		if !math.IsNaN(s.ANEES) || !math.IsNaN(s.ANEESRunMedian) {
			t.Errorf("%s: ANEES %v ANEESRunMedian %v, want NaN", name, s.ANEES, s.ANEESRunMedian)
		}
	}

	// Replayed data with truth: the runs differ in their draws, and the
	// median is that of their ANEES, (1+2)/2 and (3+5)/2 -> (1.5+4)/2.
	rp := NewAccumulator(2, 1, 0)
	rp.Replayed = true
	rp.Add(&RunTrace{Run: 0, SqErr: []float64{1, 1}, NEES: []float64{1, 2}})
	rp.Add(&RunTrace{Run: 1, SqErr: []float64{1, 1}, NEES: []float64{3, 5}})
	if m := rp.Summary(1).ANEESRunMedian; m != 2.75 {
		t.Errorf("replayed: ANEESRunMedian %v, want 2.75", m)
	}
}

// For a consistent estimator the NEES of each step is χ²_nx and K·ANEES_r
// is χ²_(K·nx) when the steps are independent (Bar-Shalom, Li &
// Kirubarajan 2001, "Estimation with Applications to Tracking and
// Navigation", §5.4.2), so the median over runs estimates the χ²_(K·nx)
// median divided by K, which is below the mean nx.
//
// nx = 1, K = 2: 2·ANEES_r is χ²_2, the exponential distribution of mean 2,
// whose median is 2·ln 2 exactly (the χ²_2 density is e^(−x/2)/2); so
// ANEES_r has median ln 2 = 0.693 and mean 1. The sample median of M runs
// has standard error 1/(2 f(ln 2) sqrt(M)) (the asymptotic variance of a
// sample quantile, p(1−p)/(M f²) at p = 1/2; Cramér 1946, "Mathematical
// Methods of Statistics", ch. 28, quoted from memory), with f(ln 2) = e^(−ln 2) = 0.5 the density of
// ANEES_r there: 1/sqrt(M) = 0.0224 for M = 2000. We allow ±4 of it
// (0.089); the mean 1 is 13.7 of it away, so a mean in place of the median
// fails.
//
// nx = 2, K = 5: the median of χ²_10 / 5 from gonum's distuv.ChiSquared,
// 9.3418/5 = 1.8684 (Abramowitz & Stegun 1964, Table 26.8, gives 9.34182
// for ν = 10, Q = 0.5; quoted from memory), the mean 2. The density of
// χ²_10 at its median is x⁴e^(−x/2)/768 = 0.0929, of ANEES_r five times
// that, so the standard error for M = 4000 is 1/(2·0.464·sqrt(4000)) =
// 0.0170; ±4 of it is 0.068, and the mean is 7.8 of it away.
func TestAccumulatorANEESRunMedianConsistent(t *testing.T) {
	for _, c := range []struct {
		name      string
		M, K, nx  int
		want, tol float64 // the χ² median / K and the tolerance of the sample median
		seed      uint64
		table     float64 // want as derived or tabulated, to check the library quantile
		tableTol  float64
	}{
		{"nx=1 K=2", 2000, 2, 1, math.Ln2, 0.089, 11, math.Ln2, 1e-12},
		{"nx=2 K=5", 4000, 5, 2, distuv.ChiSquared{K: 10}.Quantile(0.5) / 5, 0.068, 12, 9.34182 / 5, 0.000005 / 5},
	} {
		if !near(c.want, c.table, c.tableTol) {
			t.Errorf("%s: reference median %v, table %v", c.name, c.want, c.table)
		}
		s := consistentRuns(c.M, c.K, c.nx, 1, 0, 1, c.seed).Summary(0)
		if !near(s.ANEESRunMedian, c.want, c.tol) {
			t.Errorf("%s: ANEESRunMedian %v, want %v ± %v", c.name, s.ANEESRunMedian, c.want, c.tol)
		}
		if !near(s.ANEES, float64(c.nx), 4*math.Sqrt(2*float64(c.nx)/float64(c.M*c.K))) {
			t.Errorf("%s: ANEES %v, want %d", c.name, s.ANEES, c.nx)
		}
	}
}
