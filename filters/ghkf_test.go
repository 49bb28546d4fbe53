package filters_test

import (
	"fmt"
	"testing"

	"github.com/estbench/estbench/filters"
	"github.com/estbench/estbench/filters/filtertest"
)

func newGHKF(t testing.TB, m *filters.Model, cfg filters.GHKFConfig) *filters.GHKF {
	t.Helper()
	f, err := filters.NewGHKF(m, cfg)
	if err != nil {
		t.Fatal(err)
	}
	return f
}

// The Gauss-Hermite tensor rule of order p is exact for polynomials of
// degree 2p−1 per coordinate (Ito & Xiong 2000, "Gaussian filters for
// nonlinear filtering problems"), so for p = 3 and 5 the GHKF equals
// the Kalman filter on the linear-Gaussian model.
func TestGHKFEqualsKF(t *testing.T) {
	for _, p := range []int{3, 5} {
		t.Run(fmt.Sprintf("order=%d", p), func(t *testing.T) {
			filtertest.EqualsKF(t, func(m *filters.Model) filters.Filter {
				f := newGHKF(t, m, filters.GHKFConfig{Order: p})
				if got, want := f.Points(), p*p*p*p; got != want {
					t.Fatalf("Points() = %d, want %d", got, want)
				}
				return f
			}, 1e-9)
		})
	}
}

func TestGHKFNoAllocs(t *testing.T) {
	ct := ctRangeBearing()
	cx, cp := ctPrior()
	filtertest.NoAllocs(t, newGHKF(t, ct, filters.GHKFConfig{}), ct, cx, cp, nil)
	filtertest.HandlesMissing(t, newGHKF(t, ct, filters.GHKFConfig{}), ct, cx, cp)
}

// The tensor set grows as p^n; set-up refuses more than 100000 points with
// an error, and orders outside [2, 64].
func TestGHKFRefuses(t *testing.T) {
	big := &filters.Model{Nx: 11, Nz: 1,
		F: func(dst, x []float64, _ int) { copy(dst, x) },
		H: func(dst, x []float64, _ int) { dst[0] = x[0] },
		Q: make([]float64, 121), R: []float64{1}}
	if _, err := filters.NewGHKF(big, filters.GHKFConfig{}); err == nil {
		t.Error("NewGHKF accepted 3^11 = 177147 points")
	}
	m := filtertest.CV2D(0.5, 4)
	for _, p := range []int{1, -2, 65} {
		if _, err := filters.NewGHKF(m, filters.GHKFConfig{Order: p}); err == nil {
			t.Errorf("NewGHKF accepted Order %d", p)
		}
	}
	m.Nv = 2
	m.HV = func(dst, x, v []float64, k int) {}
	if _, err := filters.NewGHKF(m, filters.GHKFConfig{}); err == nil {
		t.Error("NewGHKF accepted a model with HV")
	}
}

// The angle test of the UKF: sigma points straddling the ±π bearing cut.
// The Gauss-Hermite points reach ±√3 σ, so the tolerance is that of the UKF.
func TestGHKFAngleInnovationWrapped(t *testing.T) {
	checkWestInnovation(t, newGHKF(t, ctRangeBearing(), filters.GHKFConfig{}), 1e-4)
	checkWestInnovation(t, newCKF(t, ctRangeBearing(), filters.CKFConfig{}), 1e-4)
}
