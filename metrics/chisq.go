package metrics

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// ChiSquareBounds returns the two-sided acceptance interval
//
//	[χ²_dof((1−level)/2), χ²_dof((1+level)/2)] / scale
//
// where χ²_dof(p) is the p-quantile of the chi-square distribution with dof
// degrees of freedom. For the average of M independent χ²_n values use
// dof = M·n and scale = M (Bar-Shalom, Li & Kirubarajan 2001, §5.4.2).
// It panics unless dof > 0, scale > 0 and 0 < level < 1.
func ChiSquareBounds(dof, scale, level float64) (lo, hi float64) {
	if !(dof > 0) || !(scale > 0) || !(level > 0 && level < 1) {
		panic("metrics: ChiSquareBounds needs dof > 0, scale > 0 and 0 < level < 1")
	}
	if math.IsInf(dof, 0) || math.IsInf(scale, 0) {
		panic("metrics: ChiSquareBounds needs finite dof and scale")
	}
	c := distuv.ChiSquared{K: dof}
	return c.Quantile((1-level)/2) / scale, c.Quantile((1+level)/2) / scale
}
