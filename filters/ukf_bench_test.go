package filters_test

import (
	"testing"

	"github.com/estbench/estbench/filters"
)

func BenchmarkUKF(b *testing.B) {
	m := ctRangeBearing()
	x0, p0 := ctPrior()
	zs := benchRun(m, x0, p0)
	b.Run("problem=ct-rb/filter=ukf", func(b *testing.B) {
		benchFilter(b, newUKF(b, m, filters.UKFConfig{}), x0, p0, zs)
	})
}
