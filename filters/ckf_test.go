package filters_test

import (
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"github.com/estbench/estbench/filters"
	"github.com/estbench/estbench/filters/filtertest"
)

func newCKF(t testing.TB, m *filters.Model, cfg filters.CKFConfig) *filters.CKF {
	t.Helper()
	f, err := filters.NewCKF(m, cfg)
	if err != nil {
		t.Fatal(err)
	}
	return f
}

// The cubature rule matches the mean and covariance of the Gaussian
// (Arasaratnam & Haykin 2009, "Cubature Kalman filters": the rule is
// exact for degree three), so on the linear-Gaussian model the CKF is the
// Kalman filter.
func TestCKFEqualsKF(t *testing.T) {
	filtertest.EqualsKF(t, func(m *filters.Model) filters.Filter {
		return newCKF(t, m, filters.CKFConfig{})
	}, 1e-9)
}

func TestCKFNoAllocs(t *testing.T) {
	ct := ctRangeBearing()
	cx, cp := ctPrior()
	filtertest.NoAllocs(t, newCKF(t, ct, filters.CKFConfig{}), ct, cx, cp, nil)
	filtertest.HandlesMissing(t, newCKF(t, ct, filters.CKFConfig{}), ct, cx, cp)
}

// The cubature set ±√n eⱼ with weights 1/(2n) is the scaled unscented set
// with α = 1, β = 0, κ = 0 (λ = 0: points ±√n Lⱼ, Wᵢ = 1/(2n), and a
// central point of weight 0 in the mean and 1 − α² + β = 0 in the
// covariance), so on the
// nonlinear coordinated-turn range-bearing model the CKF follows that UKF
// to rounding: 1e-9 relative over 100 steps (common practice, no source;
// 1e-12 observed), as does the symmetric set with κ = 0 (the same points).
func TestCKFEqualsUKFAlpha1Beta0(t *testing.T) {
	m := ctRangeBearing()
	x0, p0 := ctPrior()
	rng := rand.New(rand.NewPCG(31, 7))
	xt := make([]float64, 5)
	filtertest.Gaussian(xt, x0, p0, rng)
	_, zs := filtertest.Simulate(m, xt, 100, rng)
	for _, cfg := range []filters.UKFConfig{{Alpha: 1, Beta: 0, Kappa: 0}, {Points: filters.PointsSymmetric}} {
		compareFilters(t, newCKF(t, m, filters.CKFConfig{}), newUKF(t, m, cfg), m, x0, p0, zs, 1e-9)
	}
}

// compareFilters runs a and b side by side on zs and fails t unless their
// means, covariances and innovations agree to tol (absolute or relative)
// after every step. It returns the largest relative difference seen.
func compareFilters(t *testing.T, a, b filters.Filter, m *filters.Model, x0, p0 []float64, zs [][]float64, tol float64) float64 {
	t.Helper()
	for _, f := range []filters.Filter{a, b} {
		if err := f.Reset(x0, p0, nil); err != nil {
			t.Fatal(err)
		}
	}
	nx, nz := m.Nx, m.Nz
	xa, pa, xb, pb := make([]float64, nx), make([]float64, nx*nx), make([]float64, nx), make([]float64, nx*nx)
	na, sa, nb, sb := make([]float64, nz), make([]float64, nz*nz), make([]float64, nz), make([]float64, nz*nz)
	var worst float64
	check := func(what string, k int, got, want []float64) {
		t.Helper()
		for i := range got {
			d := abs(got[i]-want[i]) / max(1, abs(want[i]))
			worst = max(worst, d)
			if !scalar.EqualWithinAbsOrRel(got[i], want[i], tol, tol) {
				t.Fatalf("step %d: %s[%d] = %.17g vs %.17g", k, what, i, got[i], want[i])
			}
		}
	}
	for k := 1; k <= len(zs); k++ {
		for _, f := range []filters.Filter{a, b} {
			if err := f.Predict(k); err != nil {
				t.Fatalf("Predict(%d): %v", k, err)
			}
			if err := f.Update(zs[k-1], k); err != nil {
				t.Fatalf("Update(%d): %v", k, err)
			}
		}
		a.EstimateTo(xa, pa)
		b.EstimateTo(xb, pb)
		check("mean", k, xa, xb)
		check("cov", k, pa, pb)
		ia, ib := a.(filters.Innovator), b.(filters.Innovator)
		if ia.InnovationTo(na, sa) && ib.InnovationTo(nb, sb) {
			check("S", k, sa, sb)
		}
	}
	t.Logf("largest relative difference %.3g", worst)
	return worst
}

func abs(v float64) float64 {
	if v < 0 {
		return -v
	}
	return v
}

func TestCKFRefusesNonAdditive(t *testing.T) {
	m := filtertest.CV2D(0.5, 4)
	m.Nw = 4
	m.FW = func(dst, x, w []float64, k int) {}
	if _, err := filters.NewCKF(m, filters.CKFConfig{}); err == nil {
		t.Error("NewCKF accepted a model with FW")
	}
}
