package metrics

import (
	"gonum.org/v1/gonum/blas"
	blasgonum "gonum.org/v1/gonum/blas/gonum"
	lapackgonum "gonum.org/v1/gonum/lapack/gonum"
)

// Normalised computes the normalised squared error eᵀ C⁻¹ e of a residual e
// (len n) with covariance c (n x n, row-major), as used by NEES and NIS
// (Bar-Shalom, Li & Kirubarajan 2001, §5.4). work must hold n*n + n values
// and is overwritten; nothing is allocated. It reports false when c is not
// positive definite.
func Normalised(e, c, work []float64) (float64, bool) {
	n := len(e)
	if len(c) != n*n || len(work) < n*n+n {
		panic("metrics: Normalised: dimension mismatch")
	}
	l := work[:n*n]
	copy(l, c)
	// gonum's BLAS and LAPACK are row-major: c = L Lᵀ, then L y = e.
	if ok := (lapackgonum.Implementation{}).Dpotrf(blas.Lower, n, l, n); !ok {
		return 0, false
	}
	y := work[n*n : n*n+n]
	copy(y, e)
	(blasgonum.Implementation{}).Dtrsv(blas.Lower, blas.NoTrans, blas.NonUnit, n, l, n, y, 1)
	var s float64
	for _, v := range y {
		s += v * v
	}
	return s, true
}
