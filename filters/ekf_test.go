package filters_test

import (
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"github.com/estbench/estbench/filters"
	"github.com/estbench/estbench/filters/filtertest"
)

func newEKF(t testing.TB, m *filters.Model, cfg filters.EKFConfig) *filters.EKF {
	t.Helper()
	f, err := filters.NewEKF(m, cfg)
	if err != nil {
		t.Fatal(err)
	}
	return f
}

// On a linear-Gaussian model the EKF is the Kalman filter (Bar-Shalom, Li &
// Kirubarajan 2001, §10.3: the linearisation is exact).
func TestEKFEqualsKF(t *testing.T) {
	filtertest.EqualsKF(t, func(m *filters.Model) filters.Filter {
		return newEKF(t, m, filters.EKFConfig{})
	}, 1e-9)
}

// With differenced Jacobians the EKF still equals the KF on a linear model,
// to the rounding of a central difference with relative step 1e-6
// (about 1e-10 relative in each Jacobian entry; common practice, no source).
func TestEKFDifferencedEqualsKF(t *testing.T) {
	filtertest.EqualsKF(t, func(m *filters.Model) filters.Filter {
		mm := *m
		mm.FJac, mm.HJac = nil, nil
		return newEKF(t, &mm, filters.EKFConfig{})
	}, 1e-7)
}

func TestEKFNoAllocs(t *testing.T) {
	m := filtertest.CV2D(0.5, 4)
	x0, p0 := filtertest.CV2DPrior()
	filtertest.NoAllocs(t, newEKF(t, m, filters.EKFConfig{}), m, x0, p0, nil)

	ct := ctRangeBearing()
	cx, cp := ctPrior()
	filtertest.NoAllocs(t, newEKF(t, ct, filters.EKFConfig{}), ct, cx, cp, nil)
	num := *ct
	num.FJac, num.HJac = nil, nil
	filtertest.NoAllocs(t, newEKF(t, &num, filters.EKFConfig{}), &num, cx, cp, nil)
}

func TestEKFHandlesMissing(t *testing.T) {
	ct := ctRangeBearing()
	cx, cp := ctPrior()
	filtertest.HandlesMissing(t, newEKF(t, ct, filters.EKFConfig{}), ct, cx, cp)
}

// The EKF with central-difference Jacobians (step 1e-6 relative) follows the
// EKF with analytic Jacobians on the nonlinear coordinated-turn
// range-bearing model. The analytic Jacobians are derived by hand from the
// transition of Bar-Shalom et al. 2001 §11.7; the tolerance 1e-6 relative
// is the expected size of difference error amplified over a run (common
// practice, no source).
func TestEKFDifferencedEqualsAnalytic(t *testing.T) {
	m := ctRangeBearing()
	num := *m
	num.FJac, num.HJac = nil, nil
	x0, p0 := ctPrior()
	rng := rand.New(rand.NewPCG(7, 11))
	xt := make([]float64, 5)
	filtertest.Gaussian(xt, x0, p0, rng)
	_, zs := filtertest.Simulate(m, xt, 100, rng)

	a := newEKF(t, m, filters.EKFConfig{})
	b := newEKF(t, &num, filters.EKFConfig{})
	for _, f := range []*filters.EKF{a, b} {
		if err := f.Reset(x0, p0, nil); err != nil {
			t.Fatal(err)
		}
	}
	xa, pa := make([]float64, 5), make([]float64, 25)
	xb, pb := make([]float64, 5), make([]float64, 25)
	for k := 1; k <= len(zs); k++ {
		for _, f := range []*filters.EKF{a, b} {
			if err := f.Predict(k); err != nil {
				t.Fatalf("step %d: %v", k, err)
			}
			if err := f.Update(zs[k-1], k); err != nil {
				t.Fatalf("step %d: %v", k, err)
			}
		}
		a.EstimateTo(xa, pa)
		b.EstimateTo(xb, pb)
		for i := range xa {
			if !scalar.EqualWithinAbsOrRel(xb[i], xa[i], 1e-6, 1e-6) {
				t.Fatalf("step %d: mean[%d] differenced %.12g, analytic %.12g", k, i, xb[i], xa[i])
			}
		}
		for i := range pa {
			if !scalar.EqualWithinAbsOrRel(pb[i], pa[i], 1e-6, 1e-6) {
				t.Fatalf("step %d: cov[%d] differenced %.12g, analytic %.12g", k, i, pb[i], pa[i])
			}
		}
	}
}

// A target just south of due west, predicted at bearing −179° and measured
// at +179°: the innovation is −2°, not 358° (Model.AngleMeas contract). The
// EKF's predicted bearing is H(x̄) exactly, so only rounding remains.
// With differenced Jacobians the bearing differences across the cut are
// wrapped too, so the result is the same as with analytic ones.
func TestEKFAngleInnovationWrapped(t *testing.T) {
	m := ctRangeBearing()
	checkWestInnovation(t, newEKF(t, m, filters.EKFConfig{}), 1e-12)
	num := *m
	num.FJac, num.HJac = nil, nil
	checkWestInnovation(t, newEKF(t, &num, filters.EKFConfig{}), 1e-12)

	// Exactly due west (bearing π): the differenced Jacobian straddles the
	// cut and must equal the analytic one. With py = 0 the step is 1e-6 m,
	// so the bearing difference is about 2e-9 rad taken between values of
	// size π, each rounded to ε·π: a relative error near 3e-7 in that
	// Jacobian entry (estimate derived here), hence the tolerance 1e-6.
	x0, p0, z := westTarget()
	x0[0], x0[2] = -1000, 0
	a, b := newEKF(t, m, filters.EKFConfig{}), newEKF(t, &num, filters.EKFConfig{})
	pa, pb := make([]float64, 25), make([]float64, 25)
	xa, xb := make([]float64, 5), make([]float64, 5)
	for _, f := range []*filters.EKF{a, b} {
		if err := f.Reset(x0, p0, nil); err != nil {
			t.Fatal(err)
		}
		if err := f.Predict(1); err != nil {
			t.Fatal(err)
		}
		if err := f.Update(z, 1); err != nil {
			t.Fatal(err)
		}
	}
	a.EstimateTo(xa, pa)
	b.EstimateTo(xb, pb)
	for i := range xa {
		if !scalar.EqualWithinAbsOrRel(xb[i], xa[i], 1e-6, 1e-6) {
			t.Errorf("due west: mean[%d] differenced %.12g, analytic %.12g", i, xb[i], xa[i])
		}
	}
	for i := range pa {
		if !scalar.EqualWithinAbsOrRel(pb[i], pa[i], 1e-6, 1e-6) {
			t.Errorf("due west: cov[%d] differenced %.12g, analytic %.12g", i, pb[i], pa[i])
		}
	}
}
