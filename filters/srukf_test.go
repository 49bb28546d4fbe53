package filters_test

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"github.com/estbench/estbench/filters"
	"github.com/estbench/estbench/filters/filtertest"
)

func newSRUKF(t testing.TB, m *filters.Model, cfg filters.SRUKFConfig) *filters.SRUKF {
	t.Helper()
	f, err := filters.NewSRUKF(m, cfg)
	if err != nil {
		t.Fatal(err)
	}
	return f
}

// The square-root UKF propagates a factor of the UKF's covariance (van der
// Merwe & Wan 2001, "The square-root unscented Kalman filter for state and
// parameter estimation": the same estimate in exact arithmetic), so on the
// linear-Gaussian model it is the Kalman filter. α = 1e-3 makes Wc₀
// negative (a downdate in the time update) and amplifies rounding as in
// TestUKFEqualsKF, whose 5e-9 it uses.
func TestSRUKFEqualsKF(t *testing.T) {
	for _, cfg := range []filters.SRUKFConfig{{}, {Alpha: 1, Beta: 0, Kappa: 1}, {Alpha: 1e-3, Beta: 2}, {Alpha: 0.5, Beta: 2, Kappa: 1}} {
		tol := 1e-9
		if cfg.Alpha == 1e-3 {
			tol = 5e-9
		}
		t.Run(fmt.Sprintf("alpha=%g/beta=%g/kappa=%g", cfg.Alpha, cfg.Beta, cfg.Kappa), func(t *testing.T) {
			filtertest.EqualsKF(t, func(m *filters.Model) filters.Filter {
				return newSRUKF(t, m, cfg)
			}, tol)
		})
	}
}

// On the nonlinear coordinated-turn range-bearing model the SRUKF follows
// the UKF with the same parameters (van der Merwe & Wan 2001: the square
// root form changes the arithmetic, not the estimate) over 100 steps, to
// 1e-9 relative.
func TestSRUKFEqualsUKF(t *testing.T) {
	m := ctRangeBearing()
	x0, p0 := ctPrior()
	rng := rand.New(rand.NewPCG(17, 3))
	xt := make([]float64, 5)
	filtertest.Gaussian(xt, x0, p0, rng)
	_, zs := filtertest.Simulate(m, xt, 100, rng)
	for _, c := range []struct{ alpha, beta, kappa float64 }{{1, 2, 0}, {0.5, 2, 1}, {1, 0, 0}} {
		t.Run(fmt.Sprintf("alpha=%g/beta=%g/kappa=%g", c.alpha, c.beta, c.kappa), func(t *testing.T) {
			compareFilters(t,
				newSRUKF(t, m, filters.SRUKFConfig{Alpha: c.alpha, Beta: c.beta, Kappa: c.kappa}),
				newUKF(t, m, filters.UKFConfig{Alpha: c.alpha, Beta: c.beta, Kappa: c.kappa}),
				m, x0, p0, zs, 1e-9)
		})
	}
}

func TestSRUKFNoAllocs(t *testing.T) {
	m := filtertest.CV2D(0.5, 4)
	x0, p0 := filtertest.CV2DPrior()
	filtertest.NoAllocs(t, newSRUKF(t, m, filters.SRUKFConfig{}), m, x0, p0, nil)
	ct := ctRangeBearing()
	cx, cp := ctPrior()
	filtertest.NoAllocs(t, newSRUKF(t, ct, filters.SRUKFConfig{}), ct, cx, cp, nil)
	filtertest.HandlesMissing(t, newSRUKF(t, ct, filters.SRUKFConfig{}), ct, cx, cp)
}

func TestSRUKFAngleInnovationWrapped(t *testing.T) {
	checkWestInnovation(t, newSRUKF(t, ctRangeBearing(), filters.SRUKFConfig{}), 1e-4)
}
