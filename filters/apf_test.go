package filters_test

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/estbench/estbench/filters"
	"github.com/estbench/estbench/filters/filtertest"
)

func newAPF(t testing.TB, m *filters.Model, cfg filters.APFConfig) *filters.APF {
	t.Helper()
	f, err := filters.NewAPF(m, cfg)
	if err != nil {
		t.Fatalf("NewAPF: %v", err)
	}
	return f
}

// The auxiliary filter is consistent (Pitt & Shephard 1999; its
// estimates obey a central limit theorem at rate 1/N in the squared error,
// Johansen & Doucet 2008, "A note on auxiliary particle filters",
// Statistics & Probability Letters 78(12), as a sequential importance
// resampling filter with a modified proposal; from memory), so on the
// linear-Gaussian problems every gap to the kf falls like 1/N: slope in
// [-1.3, -0.7] as for the pf (TestPFApproachesKF), and at N = 10000 the
// same bounds as the pf's: 20·Nx/N and 20·Nz/N for the means, 10 times
// the iid value for the covariances (our choice, no source; we measured
// about 17 of 80 for the CV2D mean, whose first stage makes the weights
// more even than the bootstrap filter's, and 0.8 of 20 on the random walk).
func TestAPFApproachesKF(t *testing.T) {
	checkApproachesKF(t, func(m *filters.Model, n int) filters.Filter {
		return newAPF(t, m, filters.APFConfig{Particles: n})
	}, func(c kfCase, last gap) kfLimit {
		nx, nz := float64(c.m.Nx), float64(c.m.Nz)
		return kfLimit{-1.3, -0.7, [4]float64{20 * nx / 1e4, 20 * nz / 1e4, 10 * last.iidP / 1e4, 10 * last.iidS / 1e4}}
	})
}

// The conformance checks (no allocation in a step for every resampling
// scheme, a missing measurement keeps the prediction) on the general
// CV2D and the scalar UNGM; the same stream gives the same estimates.
func TestAPFConformance(t *testing.T) {
	cv := filtertest.CV2D(0.5, 4)
	cx, cp := filtertest.CV2DPrior()
	ug := ungmModel()
	for _, s := range schemes {
		cfg := filters.APFConfig{Particles: 200, Resample: s}
		filtertest.NoAllocs(t, newAPF(t, cv, cfg), cv, cx, cp, nil)
		filtertest.NoAllocs(t, newAPF(t, ug, cfg), ug, []float64{0.5}, []float64{5}, nil)
	}
	filtertest.HandlesMissing(t, newAPF(t, cv, filters.APFConfig{Particles: 200}), cv, cx, cp)
	filtertest.HandlesMissing(t, newAPF(t, ug, filters.APFConfig{Particles: 200}), ug, []float64{0.5}, []float64{5})
	checkDeterministic(t, func() filters.Filter { return newAPF(t, ug, filters.APFConfig{Particles: 300}) })

	// An impossible measurement (every first-stage weight below the floor).
	f := newAPF(t, ug, filters.APFConfig{Particles: 100})
	if err := f.Reset([]float64{0}, []float64{5}, rand.New(rand.NewPCG(1, 1))); err != nil {
		t.Fatal(err)
	}
	if err := f.Predict(1); err != nil {
		t.Fatal(err)
	}
	if err := f.Update([]float64{1e8}, 1); !errors.Is(err, filters.ErrWeightsZero) {
		t.Errorf("measurement beyond the floor: %v, want ErrWeightsZero", err)
	}
}

// checkDeterministic runs two filters from newF on the same UNGM data with
// the same stream, which must give bit-identical estimates, and a third
// with another stream, which must not.
func checkDeterministic(t *testing.T, newF func() filters.Filter) {
	t.Helper()
	m := ungmModel()
	const steps = 40
	_, zs := ungmSimulate(m, 0, steps, rand.New(rand.NewPCG(9, 9)))
	run := func(seed uint64) []float64 {
		f := newF()
		if err := f.Reset([]float64{0}, []float64{5}, rand.New(rand.NewPCG(seed, 1))); err != nil {
			t.Fatal(err)
		}
		var out []float64
		x, p := make([]float64, 1), make([]float64, 1)
		for k := 1; k <= steps; k++ {
			if err := f.Predict(k); err != nil {
				t.Fatal(err)
			}
			if err := f.Update(zs[k:k+1], k); err != nil {
				t.Fatal(err)
			}
			f.EstimateTo(x, p)
			out = append(out, x[0], p[0])
			if e, ok := f.(filters.ESSer); ok {
				out = append(out, e.ESS())
			}
		}
		return out
	}
	a, b, c := run(5), run(5), run(6)
	same := true
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
			t.Fatalf("same stream, different results at %d: %v vs %v", i, a[i], b[i])
		}
		same = same && a[i] == c[i]
	}
	if same {
		t.Error("a different stream gives the same estimates")
	}
}
