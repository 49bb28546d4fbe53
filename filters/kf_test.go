package filters_test

import (
	"testing"

	"github.com/estbench/estbench/filters"
	"github.com/estbench/estbench/filters/filtertest"
)

func newKF(t testing.TB, m *filters.Model) *filters.KF {
	t.Helper()
	f, err := filters.NewKF(m, filters.KFConfig{})
	if err != nil {
		t.Fatal(err)
	}
	return f
}

func TestKFNoAllocs(t *testing.T) {
	m := filtertest.CV2D(0.5, 4)
	x0, p0 := filtertest.CV2DPrior()
	filtertest.NoAllocs(t, newKF(t, m), m, x0, p0, nil)
}

func TestKFHandlesMissing(t *testing.T) {
	m := filtertest.CV2D(0.5, 4)
	x0, p0 := filtertest.CV2DPrior()
	filtertest.HandlesMissing(t, newKF(t, m), m, x0, p0)
}

// With FJac and HJac nil, KF differences F and H about the origin with unit
// step, which is exact for a linear model up to rounding (central
// differences are exact for affine maps; no external source needed).
func TestKFDifferencedEqualsAnalytic(t *testing.T) {
	filtertest.EqualsKF(t, func(m *filters.Model) filters.Filter {
		mm := *m
		mm.FJac, mm.HJac = nil, nil
		return newKF(t, &mm)
	}, 1e-12)
}
