package bench

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/estbench/estbench/datasets"
	"github.com/estbench/estbench/filters"
	"github.com/estbench/estbench/metrics"
)

const smallSuite = `
name = "harbour-launch-smoke"
seed = 11
runs = 12
[[problem]]
use = "ungm"
steps = 40
[[problem]]
use = "cv2d"
steps = 30
[[filter]]
use = "kf"
[[filter]]
use = "ekf"
[[filter]]
use = "ukf"
[[filter]]
use = "pf"
particles = [200]
`

func mustParse(t *testing.T, text string, cat *Catalogue) *Suite {
	t.Helper()
	s, err := ParseSuite("test.toml", []byte(text), cat)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

type runRecord struct {
	pair string
	st   metrics.RunStat
}

func runWith(t *testing.T, s *Suite, workers int) (*Outcome, []runRecord) {
	t.Helper()
	var recs []runRecord
	out, err := Run(s, Options{Workers: workers, OnRun: func(p *Pair, st metrics.RunStat) {
		recs = append(recs, runRecord{p.Problem + "/" + p.Filter + "/" + p.Config, st})
	}})
	if err != nil {
		t.Fatal(err)
	}
	return out, recs
}

// sameBits reports whether two floats are bit-identical (NaN equal to NaN).
func sameBits(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) }

// Determinism principle of the project: the same suite and seed give
// bit-identical values, timing columns aside, whatever the worker count.
func TestRunDeterministicAcrossWorkers(t *testing.T) {
	s := mustParse(t, smallSuite, Builtin())
	a, ra := runWith(t, s, 1)
	b, rb := runWith(t, s, 2)
	c, _ := runWith(t, s, 5)
	if len(a.Pairs) != 8 || len(ra) != len(rb) || len(ra) == 0 {
		t.Fatalf("pairs %d, run records %d vs %d", len(a.Pairs), len(ra), len(rb))
	}
	for i := range a.Pairs {
		for _, o := range []*Outcome{b, c} {
			pa, pb := a.Pairs[i], o.Pairs[i]
			sa, sb := pa.Summary, pb.Summary
			vals := [][2]float64{{sa.RMSE, sb.RMSE}, {sa.RMSELo, sb.RMSELo}, {sa.RMSEHi, sb.RMSEHi},
				{sa.ANEES, sb.ANEES}, {sa.ANEESLo, sb.ANEESLo}, {sa.NEESInBounds, sb.NEESInBounds},
				{sa.ANIS, sb.ANIS}, {sa.MeanESS, sb.MeanESS}}
			for j, v := range vals {
				if !sameBits(v[0], v[1]) {
					t.Errorf("%s %s %s: value %d differs: %v vs %v", pa.Problem, pa.Filter, pa.Config, j, v[0], v[1])
				}
			}
			if len(pa.Curves) != len(pb.Curves) {
				t.Fatalf("curve lengths differ")
			}
			for k := range pa.Curves {
				if !sameBits(pa.Curves[k].RMSE, pb.Curves[k].RMSE) || !sameBits(pa.Curves[k].ANEES, pb.Curves[k].ANEES) {
					t.Fatalf("%s %s curve step %d differs", pa.Problem, pa.Filter, k+1)
				}
			}
		}
	}
	for i := range ra {
		if ra[i].pair != rb[i].pair || ra[i].st.Run != rb[i].st.Run || !sameBits(ra[i].st.RMSE, rb[i].st.RMSE) || !sameBits(ra[i].st.ANEES, rb[i].st.ANEES) {
			t.Fatalf("run record %d differs: %+v vs %+v", i, ra[i], rb[i])
		}
	}
}

// Reordering problems and filters in a suite changes no pair's numbers:
// streams depend on (seed, problem, run) and the configuration, not on order.
func TestRunIndependentOfSuiteOrder(t *testing.T) {
	s1 := mustParse(t, smallSuite, Builtin())
	reordered := `
name = "harbour-launch-smoke"
seed = 11
runs = 12
[[filter]]
use = "pf"
particles = 200
[[filter]]
use = "ukf"
[[problem]]
use = "cv2d"
steps = 30
[[problem]]
use = "ungm"
steps = 40
`
	s2 := mustParse(t, reordered, Builtin())
	a, _ := runWith(t, s1, 2)
	b, _ := runWith(t, s2, 2)
	find := func(o *Outcome, prob, filter string) *Pair {
		for _, p := range o.Pairs {
			if p.Problem == prob && p.Filter == filter {
				return p
			}
		}
		t.Fatalf("no pair %s %s", prob, filter)
		return nil
	}
	for _, prob := range []string{"ungm(steps=40)", "cv2d(steps=30)"} {
		for _, f := range []string{"ukf", "pf"} {
			pa, pb := find(a, prob, f), find(b, prob, f)
			if !sameBits(pa.Summary.RMSE, pb.Summary.RMSE) || !sameBits(pa.Summary.ANEES, pb.Summary.ANEES) {
				t.Errorf("%s %s: %v/%v vs %v/%v", prob, f, pa.Summary.RMSE, pa.Summary.ANEES, pb.Summary.RMSE, pb.Summary.ANEES)
			}
		}
	}
}

// Every filter in one run sees the same data, so on the linear-Gaussian
// cv2d problem (Bar-Shalom, Li & Kirubarajan 2001, §6.3.2) the ekf and the
// ukf, which equal the kf there, give the kf's numbers to rounding.
func TestRunPairedIdentityOnCV2D(t *testing.T) {
	s := mustParse(t, smallSuite, Builtin())
	out, _ := runWith(t, s, 2)
	var kf *Pair
	for _, p := range out.Pairs {
		if p.Problem == "cv2d(steps=30)" && p.Filter == "kf" {
			kf = p
		}
	}
	if kf == nil || !kf.Applicable {
		t.Fatal("kf on cv2d missing")
	}
	for _, p := range out.Pairs {
		if p.Problem != kf.Problem || (p.Filter != "ekf" && p.Filter != "ukf") {
			continue
		}
		for _, v := range [][2]float64{{p.Summary.RMSE, kf.Summary.RMSE}, {p.Summary.ANEES, kf.Summary.ANEES}, {p.Summary.ANIS, kf.Summary.ANIS}} {
			if math.Abs(v[0]-v[1]) > 1e-9*math.Max(1, math.Abs(v[1])) {
				t.Errorf("%s differs from kf: %v vs %v", p.Filter, v[0], v[1])
			}
		}
	}
}

func TestRunNotApplicableIsReported(t *testing.T) {
	s := mustParse(t, smallSuite, Builtin())
	out, _ := runWith(t, s, 2)
	for _, p := range out.Pairs {
		if p.Problem == "ungm(steps=40)" && p.Filter == "kf" {
			if p.Applicable || p.Note != "kf needs a linear model; ungm(steps=40) is nonlinear" || p.Summary.Runs != 0 {
				t.Fatalf("kf on ungm: applicable=%v note=%q runs=%d", p.Applicable, p.Note, p.Summary.Runs)
			}
			return
		}
	}
	t.Fatal("kf on ungm not reported")
}

// faulty wraps a kf and misbehaves on chosen runs: it panics, or its
// estimate turns NaN, at a given step. It tests that failures are data.
type faulty struct {
	filters.Filter
	mode string
	run  *int
	bad  map[int]bool
	step int // the step that fails; 0 means 7
}

func (f *faulty) Reset(x0, p0 []float64, rng *rand.Rand) error {
	*f.run++
	return f.Filter.Reset(x0, p0, rng)
}

func (f *faulty) Predict(k int) error {
	at := f.step
	if at == 0 {
		at = 7
	}
	if f.bad[*f.run] && k == at {
		if f.mode == "panic" {
			var s []int
			_ = s[k] // an index out of range, as a buggy filter would
		}
	}
	return f.Filter.Predict(k)
}

func (f *faulty) EstimateTo(x, p []float64) {
	f.Filter.EstimateTo(x, p)
	if f.mode == "nan" && f.bad[*f.run] {
		x[0] = math.NaN()
	}
}

func faultyCatalogue(mode string) *Catalogue {
	cat := Builtin()
	cat.Filters = append(cat.Filters, FilterSpec{
		Name:    "faulty",
		Summary: "a kf that fails on some runs (tests only)",
		Applies: func(t datasets.Traits) (bool, string) { return t.Linear, "needs a linear model" },
		New: func(m *filters.Model, v Values) (filters.Filter, error) {
			kf, err := filters.NewKF(m, filters.KFConfig{})
			// run counts this instance's Resets from 0. The probe builds an
			// instance of its own, so with one worker Reset r is run r.
			run := -1
			return &faulty{Filter: kf, mode: mode, run: &run, bad: map[int]bool{3: true}}, err
		},
	})
	return cat
}

func TestRunIsolatesPanicsAndNaN(t *testing.T) {
	for _, mode := range []string{"panic", "nan"} {
		t.Run(mode, func(t *testing.T) {
			s := mustParse(t, `
name = "survey-drone-faults"
seed = 3
runs = 6
[[problem]]
use = "cv2d"
steps = 20
[[filter]]
use = "faulty"
[[filter]]
use = "kf"
`, faultyCatalogue(mode))
			out, recs := runWith(t, s, 1)
			var faultyPair, kfPair *Pair
			for _, p := range out.Pairs {
				switch p.Filter {
				case "faulty":
					faultyPair = p
				case "kf":
					kfPair = p
				}
			}
			if faultyPair.Summary.Diverged != 1 || faultyPair.Summary.Runs != 6 {
				t.Fatalf("diverged %d of %d, want 1 of 6", faultyPair.Summary.Diverged, faultyPair.Summary.Runs)
			}
			if kfPair.Summary.Diverged != 0 || math.IsNaN(kfPair.Summary.RMSE) {
				t.Fatalf("kf affected by the other filter's failure: %+v", kfPair.Summary)
			}
			var got *metrics.RunStat
			for i := range recs {
				if strings.HasPrefix(recs[i].pair, "cv2d(steps=20)/faulty") && recs[i].st.Diverged {
					got = &recs[i].st
				}
			}
			if got == nil {
				t.Fatal("no diverged run recorded")
			}
			// Reset number 3 of the single worker's filter is run 3.
			wantReason := map[string]string{"panic": "panic: runtime error: index out of range", "nan": "estimate not finite"}[mode]
			wantStep := map[string]int{"panic": 7, "nan": 1}[mode]
			if got.Run != 3 || got.DivStep != wantStep || !strings.HasPrefix(got.Reason, wantReason) {
				t.Fatalf("diverged run %d step %d reason %q; want run 3 step %d reason %q...", got.Run, got.DivStep, got.Reason, wantStep, wantReason)
			}
			if mode == "panic" && !strings.Contains(got.Reason, "faulty") {
				t.Errorf("reason does not name where the panic happened: %q", got.Reason)
			}
		})
	}
}

// Many workers on many short runs: runs finish far out of order, which
// must neither deadlock the ordered collection nor change a number.
func TestRunManyWorkersShortRuns(t *testing.T) {
	text := `
name = "survey-drone-stress"
seed = 2
runs = 300
[[problem]]
use = "cv2d"
steps = 3
[[filter]]
use = "kf"
[[filter]]
use = "pf"
particles = 20
`
	s := mustParse(t, text, Builtin())
	a, _ := runWith(t, s, 1)
	for _, w := range []int{3, 8, 16} {
		b, _ := runWith(t, s, w)
		for i := range a.Pairs {
			if !sameBits(a.Pairs[i].Summary.RMSE, b.Pairs[i].Summary.RMSE) || !sameBits(a.Pairs[i].Summary.ANEES, b.Pairs[i].Summary.ANEES) {
				t.Fatalf("workers=%d: pair %d differs", w, i)
			}
		}
	}
}

// On the univariate nonstationary growth model the bootstrap particle
// filter's RMSE is far below the EKF's: Gordon, Salmond & Smith 1993 (Fig. 2
// and text) and Arulampalam et al. 2002 ("A tutorial on particle filters",
// IEEE TSP 50(2), §VI) show the EKF losing the bimodal posterior; reported
// RMSEs (from memory) are around 20 or more for the EKF and about 4 to 5 for a
// bootstrap filter with hundreds of particles. We require a factor of 3.
func TestUNGMParticleFilterBeatsEKF(t *testing.T) {
	s := mustParse(t, `
name = "ungm-check"
seed = 4
runs = 30
[[problem]]
use = "ungm"
[[filter]]
use = "ekf"
[[filter]]
use = "pf"
particles = 500
`, Builtin())
	out, _ := runWith(t, s, 2)
	ekf, pf := out.Pairs[0].Summary, out.Pairs[1].Summary
	if !(pf.RMSE > 2 && pf.RMSE < 7) || !(ekf.RMSE > 3*pf.RMSE) {
		t.Fatalf("ekf rmse %.2f, pf rmse %.2f: want pf in (2, 7) and ekf above 3x pf", ekf.RMSE, pf.RMSE)
	}
	// The pf's confidence interval lies wholly below the ekf's.
	if !(pf.RMSEHi < ekf.RMSELo) {
		t.Fatalf("intervals overlap: pf [%.2f, %.2f], ekf [%.2f, %.2f]", pf.RMSELo, pf.RMSEHi, ekf.RMSELo, ekf.RMSEHi)
	}
}

// A filter that panics on its very first step of every run (so also in the
// allocation and evaluation probe) is recorded as diverged in every run,
// and the rest of the suite goes on.
func TestRunPanicInProbeRun(t *testing.T) {
	cat := Builtin()
	cat.Filters = append(cat.Filters, FilterSpec{
		Name:    "alwayspanics",
		Summary: "a kf that panics at step 1 (tests only)",
		Applies: func(t datasets.Traits) (bool, string) { return t.Linear, "needs a linear model" },
		New: func(m *filters.Model, v Values) (filters.Filter, error) {
			kf, err := filters.NewKF(m, filters.KFConfig{})
			bad := map[int]bool{}
			run := -1
			for i := 0; i < 100; i++ {
				bad[i] = true
			}
			return &faulty{Filter: kf, mode: "panic", run: &run, bad: bad, step: 1}, err
		},
	})
	s := mustParse(t, `
name = "survey-drone-probe"
seed = 3
runs = 4
[[problem]]
use = "cv2d"
steps = 10
[[filter]]
use = "alwayspanics"
[[filter]]
use = "kf"
`, cat)
	out, _ := runWith(t, s, 2)
	if p := out.Pairs[0]; p.Summary.Diverged != 4 || !math.IsNaN(p.AllocsPerStep) {
		t.Fatalf("panicking filter: diverged %d of 4, allocs %v", p.Summary.Diverged, p.AllocsPerStep)
	}
	if p := out.Pairs[1]; p.Summary.Diverged != 0 || math.IsNaN(p.Summary.RMSE) {
		t.Fatalf("kf affected: %+v", p.Summary)
	}
}
