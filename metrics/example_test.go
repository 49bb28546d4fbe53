package metrics_test

import (
	"fmt"
	"math"

	"github.com/estbench/estbench/metrics"
)

// The 95% region of the average NEES of 50 runs of a 2-dimensional state
// (Bar-Shalom, Li & Kirubarajan 2001, §5.4.2, which prints [1.5, 2.6]).
func ExampleChiSquareBounds() {
	lo, hi := metrics.ChiSquareBounds(50*2, 50, 0.95)
	fmt.Printf("[%.3f, %.3f]\n", lo, hi)
	// Output: [1.484, 2.591]
}

// A shore radar follows a harbour launch over three steps; two runs of the
// same filter are scored, one of which diverged.
func ExampleAccumulator() {
	acc := metrics.NewAccumulator(3, 2, 1)
	acc.Grow(2)
	acc.Add(&metrics.RunTrace{Run: 0,
		SqErr: []float64{1, 4, 4}, NEES: []float64{2, 1.5, 2.5}, NIS: []float64{0.5, math.NaN(), 1.5},
		NsPerStep: 850})
	acc.Add(&metrics.RunTrace{Run: 1, Diverged: true, DivStep: 2, Reason: "covariance not positive definite"})
	s := acc.Summary(1)
	fmt.Printf("rmse %.3f anees %.3f anis %.3f, %d of %d diverged\n", s.RMSE, s.ANEES, s.ANIS, s.Diverged, s.Runs)
	for _, w := range s.Warnings {
		fmt.Println(w)
	}
	// Output:
	// rmse 1.732 anees 2.000 anis 1.000, 1 of 2 diverged
	// 1 of 2 runs diverged (first: run 1, step 2: covariance not positive definite), the metrics use the other 1
	// bounds from 1 runs are loose: use --runs 20 or more
	// the RMSE interval needs at least 2 runs: use --runs 20 or more
}

// A paired bootstrap of the relative change of mean squared error between
// two filters scored on the same runs: each resample draws the same run
// indices for both. The pooled change is 7.5/8.3 - 1 = -0.096.
func ExampleBootstrap() {
	base := []float64{1.0, 1.2, 0.9, 1.1, 1.0, 1.3, 0.8, 1.0}
	cand := []float64{0.9, 1.1, 0.8, 1.0, 0.9, 1.2, 0.7, 0.9}
	lo, hi := metrics.Bootstrap(len(base), 0, 7, 0.95, func(idx []int) float64 {
		var b, c float64
		for _, i := range idx {
			b += base[i]
			c += cand[i]
		}
		return c/b - 1
	})
	fmt.Printf("relative change of MSE: [%.3f, %.3f]\n", lo, hi)
	// Output: relative change of MSE: [-0.107, -0.087]
}
