package filters_test

import (
	"testing"

	"github.com/estbench/estbench/filters"
)

func BenchmarkEKF(b *testing.B) {
	m := ctRangeBearing()
	x0, p0 := ctPrior()
	zs := benchRun(m, x0, p0)
	num := *m
	num.FJac, num.HJac = nil, nil
	b.Run("problem=ct-rb/filter=ekf", func(b *testing.B) {
		benchFilter(b, newEKF(b, m, filters.EKFConfig{}), x0, p0, zs)
	})
	b.Run("problem=ct-rb/filter=ekf/jacobians=differenced", func(b *testing.B) {
		benchFilter(b, newEKF(b, &num, filters.EKFConfig{}), x0, p0, zs)
	})
}
