package filters_test

import (
	"testing"

	"github.com/estbench/estbench/filters"
)

// BenchmarkGaussian times one step of each Gaussian filter of this family
// on the coordinated-turn range-bearing model (5 states, 2 measurements).
func BenchmarkGaussian(b *testing.B) {
	m := ctRangeBearing()
	x0, p0 := ctPrior()
	zs := benchRun(m, x0, p0)
	num := *m
	num.FJac, num.HJac = nil, nil
	cases := []struct {
		name string
		mk   func() filters.Filter
	}{
		{"filter=iekf", func() filters.Filter { return newIEKF(b, m, filters.IEKFConfig{}) }},
		{"filter=iekf/jacobians=differenced", func() filters.Filter { return newIEKF(b, &num, filters.IEKFConfig{}) }},
		{"filter=ukf/points=scaled", func() filters.Filter { return newUKF(b, m, filters.UKFConfig{}) }},
		{"filter=ukf/points=symmetric", func() filters.Filter { return newUKF(b, m, filters.UKFConfig{Points: filters.PointsSymmetric}) }},
		{"filter=ukf/points=simplex", func() filters.Filter { return newUKF(b, m, filters.UKFConfig{Points: filters.PointsSimplex}) }},
		{"filter=ukf/augment=always", func() filters.Filter { return newUKF(b, m, filters.UKFConfig{Augment: true}) }},
		{"filter=srukf", func() filters.Filter { return newSRUKF(b, m, filters.SRUKFConfig{}) }},
		{"filter=ckf", func() filters.Filter { return newCKF(b, m, filters.CKFConfig{}) }},
		{"filter=ghkf/order=3", func() filters.Filter { return newGHKF(b, m, filters.GHKFConfig{Order: 3}) }},
		{"filter=ghkf/order=5", func() filters.Filter { return newGHKF(b, m, filters.GHKFConfig{Order: 5}) }},
	}
	for _, c := range cases {
		b.Run("problem=ct-rb/"+c.name, func(b *testing.B) {
			benchFilter(b, c.mk(), x0, p0, zs)
		})
	}
}
