package filters

import "math"

// Small dense row-major linear algebra for the fixed sizes filters use.
// None of these functions allocate. dst never aliases an input unless said.

// mul sets dst (m x n) = a (m x k) * b (k x n).
func mul(dst, a, b []float64, m, k, n int) {
	for i := 0; i < m; i++ {
		row := dst[i*n : i*n+n]
		for j := range row {
			row[j] = 0
		}
		ai := a[i*k : i*k+k]
		for l, av := range ai {
			if av == 0 {
				continue
			}
			bl := b[l*n : l*n+n]
			for j, bv := range bl {
				row[j] += av * bv
			}
		}
	}
}

// mulABt sets dst (m x n) = a (m x k) * bᵀ, where b is n x k.
func mulABt(dst, a, b []float64, m, k, n int) {
	for i := 0; i < m; i++ {
		ai := a[i*k : i*k+k]
		for j := 0; j < n; j++ {
			bj := b[j*k : j*k+k]
			var s float64
			for l, av := range ai {
				s += av * bj[l]
			}
			dst[i*n+j] = s
		}
	}
}

// mulVec sets dst (m) = a (m x n) * x (n).
func mulVec(dst, a, x []float64, m, n int) {
	for i := 0; i < m; i++ {
		ai := a[i*n : i*n+n]
		var s float64
		for j, av := range ai {
			s += av * x[j]
		}
		dst[i] = s
	}
}

// symmetrize replaces a (n x n) by (a + aᵀ)/2.
func symmetrize(a []float64, n int) {
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			v := 0.5 * (a[i*n+j] + a[j*n+i])
			a[i*n+j] = v
			a[j*n+i] = v
		}
	}
}

// cholesky writes the lower Cholesky factor L of the symmetric matrix a
// (n x n) into l (upper triangle zeroed). l may alias a. It reports false
// if a is not positive definite (or has non-finite entries).
func cholesky(l, a []float64, n int) bool {
	for j := 0; j < n; j++ {
		s := a[j*n+j]
		for k := 0; k < j; k++ {
			s -= l[j*n+k] * l[j*n+k]
		}
		if !(s > 0) || math.IsInf(s, 0) {
			return false
		}
		d := math.Sqrt(s)
		l[j*n+j] = d
		inv := 1 / d
		for i := j + 1; i < n; i++ {
			t := a[i*n+j]
			for k := 0; k < j; k++ {
				t -= l[i*n+k] * l[j*n+k]
			}
			l[i*n+j] = t * inv
		}
		for i := 0; i < j; i++ {
			l[i*n+j] = 0
		}
	}
	return true
}

// forwardSolve solves L y = b in place (b becomes y); L is n x n lower.
func forwardSolve(l, b []float64, n int) {
	for i := 0; i < n; i++ {
		s := b[i]
		for k := 0; k < i; k++ {
			s -= l[i*n+k] * b[k]
		}
		b[i] = s / l[i*n+i]
	}
}

// backSolveT solves Lᵀ x = y in place (y becomes x); L is n x n lower.
func backSolveT(l, y []float64, n int) {
	for i := n - 1; i >= 0; i-- {
		s := y[i]
		for k := i + 1; k < n; k++ {
			s -= l[k*n+i] * y[k]
		}
		y[i] = s / l[i*n+i]
	}
}

// cholSolveRowsT solves X S = B for X, with S = L Lᵀ symmetric (n x n),
// B and X (m x n), in place in b. Used for the gain K = Pxz S⁻¹.
func cholSolveRowsT(l, b []float64, m, n int) {
	// X S = B  <=>  S Xᵀ = Bᵀ, solved row by row of B.
	for r := 0; r < m; r++ {
		row := b[r*n : r*n+n]
		forwardSolve(l, row, n)
		backSolveT(l, row, n)
	}
}

// wrapAngle maps an angle to (-pi, pi].
func wrapAngle(a float64) float64 {
	if a > -math.Pi && a <= math.Pi {
		return a
	}
	a = math.Mod(a+math.Pi, 2*math.Pi)
	if a <= 0 {
		a += 2 * math.Pi
	}
	return a - math.Pi
}

// allFinite reports whether every value is finite.
func allFinite(v []float64) bool {
	for _, x := range v {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return false
		}
	}
	return true
}

// identity sets a (n x n) to the identity.
func identity(a []float64, n int) {
	for i := range a[:n*n] {
		a[i] = 0
	}
	for i := 0; i < n; i++ {
		a[i*n+i] = 1
	}
}

// WrapAngle maps an angle in radians to (-pi, pi].
func WrapAngle(a float64) float64 { return wrapAngle(a) }
