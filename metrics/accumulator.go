package metrics

import (
	"fmt"
	"math"
	"strings"
)

// level is the two-sided confidence level of every bound and interval.
const level = 0.95

// looseRuns is the number of usable runs below which Summary warns that the
// bounds are loose (common practice, no source).
const looseRuns = 10

// Accumulator gathers the RunTraces of one filter configuration on one
// problem, run by run, into per-step sums and a few numbers per run, and
// reads them out as a Summary and per-step Curves. See the package
// documentation for the formulas and conventions.
type Accumulator struct {
	// Resamples is the number of bootstrap resamples of the RMSE interval.
	// If zero, DefaultResamples (2000) is used.
	Resamples int

	// NoTruth says the runs have no ground truth: recorded data, the same
	// in every run. Summary and Curves then give NaN for RMSE and ANEES
	// and their intervals and bounds (SqErr and NEES are ignored), and
	// the ANIS bounds are those of one run's measurements, since the runs
	// replay the same data and are not independent samples of it. Set it
	// before the first Add.
	NoTruth bool

	// Replayed says every run replays the same recorded measurements
	// against a fixed truth (the runs differ only in what their streams
	// draw, such as the prior's error): the runs are then not independent
	// samples, and the NEES and NIS bounds are those of one run's values,
	// as for NoTruth. Set it before the first Add.
	Replayed bool

	steps, nx, nz int

	runs     int // traces added, diverged or not
	lastRun  int // Run of the last trace added
	diverged int // diverged traces added
	// the first diverged trace, in the order added
	divRun, divStep int
	divReason       string

	// per-step sums over the non-diverged runs, each added in run order
	sqErr    []float64 // Σ_r SqErr_r(k) over the runs that score step k
	nees     []float64 // Σ_r NEES_r(k) over the same runs
	scoredN  []int     // number of those runs
	nis      []float64 // Σ_r NIS_r(k) over the runs with a measurement at k
	nisCount []int     // number of those runs
	predSq   []float64 // Σ_r PredSqErr_r(k) over the runs with a value at k
	predN    []int     // number of those runs

	repairs, repairRuns int // covariance repairs over all runs; runs that needed one

	essSum   float64 // Σ ESS over non-diverged runs that report it, all steps
	essCount int     // number of terms in essSum

	// one entry per non-diverged run, in run order
	runMSE []float64 // mean over steps of SqErr
	runNs  []float64 // NsPerStep
	// one entry per non-diverged run that scores at least one step, in
	// run order: the mean of NEES over its scored steps (its ANEES)
	runANEES []float64
}

// NewAccumulator returns an empty accumulator for runs of the given number
// of steps, state dimension nx (the NEES degrees of freedom) and measurement
// dimension nz (the NIS degrees of freedom; 0 when there are no NIS values).
// It panics if steps < 1, nx < 1 or nz < 0.
func NewAccumulator(steps, nx, nz int) *Accumulator {
	if steps < 1 || nx < 1 || nz < 0 {
		panic("metrics: NewAccumulator needs steps >= 1, nx >= 1 and nz >= 0")
	}
	return &Accumulator{
		steps:    steps,
		nx:       nx,
		nz:       nz,
		sqErr:    make([]float64, steps),
		nees:     make([]float64, steps),
		scoredN:  make([]int, steps),
		nis:      make([]float64, steps),
		nisCount: make([]int, steps),
		predSq:   make([]float64, steps),
		predN:    make([]int, steps),
	}
}

// Grow makes room for runs more non-diverged runs, so that the next runs
// calls of Add allocate nothing.
func (a *Accumulator) Grow(runs int) {
	if runs < 0 {
		panic("metrics: Grow needs runs >= 0")
	}
	a.runMSE = grow(a.runMSE, runs)
	a.runNs = grow(a.runNs, runs)
	a.runANEES = grow(a.runANEES, runs)
}

func grow(s []float64, n int) []float64 {
	if cap(s)-len(s) >= n {
		return s
	}
	t := make([]float64, len(s), len(s)+n)
	copy(t, s)
	return t
}

// Add adds one run. Runs must be added in increasing order of t.Run; that
// fixes the order of every floating-point sum, so the results do not depend
// on how or where the runs were computed. Add reads t's slices and keeps
// none of them.
//
// A step whose SqErr is NaN is not scored: the problem leaves it out of
// RMSE and NEES (recorded data that mark the samples to evaluate), and its
// NEES is ignored too.
//
// A diverged trace is counted and its values are ignored. A non-diverged
// trace must have len(SqErr) == len(NEES) == steps, and NIS and ESS each
// either nil or of that length; otherwise Add panics. NIS is ignored when
// nz is 0.
//
// Add allocates only when a per-run slice has to grow (never after Grow).
func (a *Accumulator) Add(t *RunTrace) {
	if a.runs > 0 && t.Run <= a.lastRun {
		panic(fmt.Sprintf("metrics: run %d added after run %d; add runs in increasing run order", t.Run, a.lastRun))
	}
	if !t.Diverged {
		a.check("SqErr", len(t.SqErr), false)
		a.check("NEES", len(t.NEES), false)
		a.check("NIS", len(t.NIS), true)
		a.check("PredSqErr", len(t.PredSqErr), true)
		a.check("ESS", len(t.ESS), true)
	}
	a.runs++
	a.lastRun = t.Run
	if t.Repairs > 0 {
		a.repairs += t.Repairs
		a.repairRuns++
	}
	if t.Diverged {
		if a.diverged == 0 {
			a.divRun, a.divStep, a.divReason = t.Run, t.DivStep, t.Reason
		}
		a.diverged++
		return
	}

	var se, ne float64
	n := 0
	for k, v := range t.SqErr {
		if math.IsNaN(v) {
			continue
		}
		a.sqErr[k] += v
		a.nees[k] += t.NEES[k]
		a.scoredN[k]++
		se += v
		ne += t.NEES[k]
		n++
	}
	if a.nz > 0 {
		for k, v := range t.NIS {
			if !math.IsNaN(v) {
				a.nis[k] += v
				a.nisCount[k]++
			}
		}
	}
	for k, v := range t.PredSqErr {
		if !math.IsNaN(v) {
			a.predSq[k] += v
			a.predN[k]++
		}
	}
	for _, v := range t.ESS {
		a.essSum += v
	}
	a.essCount += len(t.ESS)

	a.runMSE = append(a.runMSE, se/float64(n)) // NaN when no step is scored
	a.runNs = append(a.runNs, t.NsPerStep)
	if n > 0 {
		a.runANEES = append(a.runANEES, ne/float64(n))
	}
}

func (a *Accumulator) check(field string, n int, nilOK bool) {
	if n == a.steps || (nilOK && n == 0) {
		return
	}
	panic(fmt.Sprintf("metrics: %s has %d entries, want %d", field, n, a.steps))
}

// Runs returns the number of runs added and how many of them diverged.
func (a *Accumulator) Runs() (runs, diverged int) { return a.runs, a.diverged }

// Summary returns the one-row result of the runs added so far. bootSeed
// seeds the bootstrap of the RMSE interval; the same runs and seed give a
// bit-identical Summary. Summary does not change the accumulator.
func (a *Accumulator) Summary(bootSeed uint64) Summary {
	nan := math.NaN()
	s := Summary{
		Runs: a.runs, Diverged: a.diverged,
		RMSE: nan, RMSELo: nan, RMSEHi: nan, PredRMSE: nan,
		ANEES: nan, ANEESLo: nan, ANEESHi: nan, ANEESRunMedian: nan, NEESInBounds: nan,
		ANIS: nan, ANISLo: nan, ANISHi: nan, NISInBounds: nan,
		NsPerStep: nan, MeanESS: nan,
	}
	M := len(a.runMSE) // usable (non-diverged) runs
	switch {
	case a.runs == 0:
		s.Warnings = append(s.Warnings, "no runs were added, every metric is NaN")
		return s
	case a.diverged > 0:
		reason, _, _ := strings.Cut(a.divReason, "\n")
		// A note joins warnings with "; ", so a warning never contains one.
		reason = strings.ReplaceAll(reason, "; ", ", ")
		w := fmt.Sprintf("%d of %d runs diverged (first: run %d, step %d: %s)", a.diverged, a.runs, a.divRun, a.divStep, reason)
		if M == 0 {
			w += ", no run is left, so every metric is NaN: fix the divergence first"
		} else {
			w += fmt.Sprintf(", the metrics use the other %d", M)
		}
		s.Warnings = append(s.Warnings, w)
	}
	if M == 0 {
		return s
	}
	if M < looseRuns && !a.NoTruth && !a.Replayed { // replayed data: the bounds do not grow with the runs
		s.Warnings = append(s.Warnings, fmt.Sprintf("bounds from %d runs are loose: use --runs 20 or more", M))
	}

	// N: the scored (run, step) pairs; K: the steps scored in some run.
	N, K := 0, 0
	for _, c := range a.scoredN {
		if c > 0 {
			N += c
			K++
		}
	}
	truth := !a.NoTruth && N > 0
	if !a.NoTruth && N == 0 {
		s.Warnings = append(s.Warnings, "no step is scored, so rmse and anees are NaN")
	}

	// The one-step-ahead prediction error over the (run, step) pairs
	// with an innovation.
	if n := sumInts(a.predN); n > 0 {
		s.PredRMSE = math.Sqrt(sum(a.predSq) / float64(n))
	}

	// RMSE over all runs and steps, and its bootstrap interval over runs.
	if a.NoTruth {
		s.Warnings = append(s.Warnings, NoTruthWarning)
	} else if truth {
		s.RMSE = math.Sqrt(sum(a.sqErr) / float64(N))
	}
	switch {
	case !truth:
	case M < 2:
		s.Warnings = append(s.Warnings, "the RMSE interval needs at least 2 runs: use --runs 20 or more")
	default:
		s.RMSELo, s.RMSEHi = Bootstrap(M, a.Resamples, bootSeed, level, func(idx []int) float64 {
			var m float64
			for _, i := range idx {
				m += a.runMSE[i]
			}
			return math.Sqrt(m / float64(len(idx)))
		})
	}

	// ANEES and the fraction of steps whose run average is in bounds.
	if truth {
		s.ANEES = sum(a.nees) / float64(N)
		m := float64(N)
		if a.Replayed {
			m = float64(K) // one run's worth of independent values
		}
		s.ANEESLo, s.ANEESHi = ChiSquareBounds(m*float64(a.nx), m, level)
		s.ANEESRunMedian = Median(a.runANEES) // not empty: N > 0
		var bc boundsCache
		in := 0
		for k, v := range a.nees {
			c := a.scoredN[k]
			if c == 0 {
				continue
			}
			lo, hi := bc.get(a.independent(c), a.nx)
			if avg := v / float64(c); avg >= lo && avg <= hi {
				in++
			}
		}
		s.NEESInBounds = float64(in) / float64(K)
	}

	// ANIS over the (run, step) pairs with a measurement.
	if a.nz > 0 {
		var total int
		var bc boundsCache
		in, stepsWith := 0, 0
		for k, c := range a.nisCount {
			if c == 0 {
				continue
			}
			total += c
			stepsWith++
			lo, hi := bc.get(a.independent(c), a.nz)
			if avg := a.nis[k] / float64(c); avg >= lo && avg <= hi {
				in++
			}
		}
		if total > 0 {
			n := float64(total)
			s.ANIS = sum(a.nis) / n
			if a.NoTruth || a.Replayed {
				n = float64(stepsWith) // one run's worth of independent values
			}
			s.ANISLo, s.ANISHi = ChiSquareBounds(n*float64(a.nz), n, level)
			s.NISInBounds = float64(in) / float64(stepsWith)
		}
	}

	s.NsPerStep = Median(a.runNs)
	if a.essCount > 0 {
		s.MeanESS = a.essSum / float64(a.essCount)
	}
	s.Repairs = a.repairs
	if a.repairs > 0 {
		s.Warnings = append(s.Warnings, fmt.Sprintf("the covariance needed %d jitter repairs in %d of %d runs; the filter is numerically fragile here (a square-root form or a retuned noise model may help)", a.repairs, a.repairRuns, a.runs))
	}
	return s
}

// Curves returns one point per step (Step = 1..steps) over the non-diverged
// runs added so far. With no such run every value is NaN.
func (a *Accumulator) Curves() []CurvePoint {
	M := len(a.runMSE)
	nan := math.NaN()
	var bc, be boundsCache
	out := make([]CurvePoint, a.steps)
	for k := range out {
		p := CurvePoint{Step: k + 1, RMSE: nan, PredRMSE: nan, ANEES: nan, ANEESLo: nan, ANEESHi: nan, ANIS: nan, Runs: M, ANISLo: nan, ANISHi: nan}
		if c := a.predN[k]; c > 0 {
			p.PredRMSE = math.Sqrt(a.predSq[k] / float64(c))
		}
		if c := a.scoredN[k]; c > 0 && !a.NoTruth {
			p.RMSE = math.Sqrt(a.sqErr[k] / float64(c))
			p.ANEES = a.nees[k] / float64(c)
			p.ANEESLo, p.ANEESHi = be.get(a.independent(c), a.nx)
		}
		if c := a.nisCount[k]; c > 0 {
			p.NISRuns = c
			p.ANIS = a.nis[k] / float64(c)
			p.ANISLo, p.ANISHi = bc.get(a.independent(c), a.nz)
		}
		out[k] = p
	}
	return out
}

// boundsCache remembers the bounds for the last count, since the number of
// runs with a measurement is usually the same from step to step.
type boundsCache struct {
	c      int
	lo, hi float64
}

func (b *boundsCache) get(c, dof int) (lo, hi float64) {
	if b.c != c {
		b.c = c
		b.lo, b.hi = ChiSquareBounds(float64(c*dof), float64(c), level)
	}
	return b.lo, b.hi
}

// NoTruthWarning is the Summary warning of a problem without ground truth.
const NoTruthWarning = "no ground truth: rmse and anees are not defined; pred_rmse and anis are"

// independent is the number of independent NIS values behind c runs' values
// at one step: c, or 1 when the runs replay the same recorded data.
func (a *Accumulator) independent(c int) int {
	if a.NoTruth || a.Replayed {
		return 1
	}
	return c
}

func sumInts(v []int) int {
	var s int
	for _, x := range v {
		s += x
	}
	return s
}

// sum adds v in index order.
func sum(v []float64) float64 {
	var s float64
	for _, x := range v {
		s += x
	}
	return s
}

// RunStatOf returns the scalar summary of one run. It keeps none of t's
// slices and allocates nothing. For a diverged run RMSE, ANEES, ANIS and
// MeanESS are NaN (its values past the divergence are not meaningful);
// NsPerStep is copied as recorded.
func RunStatOf(t *RunTrace) RunStat {
	nan := math.NaN()
	r := RunStat{
		Run: t.Run, Diverged: t.Diverged, DivStep: t.DivStep, Reason: t.Reason,
		RMSE: nan, PredRMSE: nan, ANEES: nan, ANIS: nan, NsPerStep: t.NsPerStep, MeanESS: nan,
		Repairs: t.Repairs,
	}
	if t.Diverged {
		return r
	}
	var se, ne float64
	n := 0
	for k, v := range t.SqErr { // a NaN SqErr marks a step not scored
		if !math.IsNaN(v) {
			se += v
			ne += t.NEES[k]
			n++
		}
	}
	if n > 0 {
		r.RMSE = math.Sqrt(se / float64(n))
		r.ANEES = ne / float64(n)
	}
	var ns float64
	var nc int
	for _, v := range t.NIS {
		if !math.IsNaN(v) {
			ns += v
			nc++
		}
	}
	if nc > 0 {
		r.ANIS = ns / float64(nc)
	}
	var ps float64
	var pc int
	for _, v := range t.PredSqErr {
		if !math.IsNaN(v) {
			ps += v
			pc++
		}
	}
	if pc > 0 {
		r.PredRMSE = math.Sqrt(ps / float64(pc))
	}
	if len(t.ESS) > 0 {
		r.MeanESS = sum(t.ESS) / float64(len(t.ESS))
	}
	return r
}
