package filters

import (
	"errors"
	"math"
)

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

// mulDot sets dst (m x n) = a (m x k) * b (k x n) as mul does, each entry
// summed in a register in the same order (zero entries of a are not
// skipped, which changes nothing for finite b): for the small products of
// the filter steps, where mul's sums through memory wait on every store.
func mulDot(dst, a, b []float64, m, k, n int) {
	b = b[:k*n]
	for i := 0; i < m; i++ {
		ai := a[i*k : i*k+k]
		row := dst[i*n : i*n+n]
		for j := range row {
			var s float64
			for l, av := range ai {
				s += av * b[l*n+j]
			}
			row[j] = s
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
	l, a = l[:n*n], a[:n*n]
	for j := 0; j < n; j++ {
		lj := l[j*n : j*n+j+1] // row j up to the diagonal
		s := a[j*n+j]
		for _, v := range lj[:j] {
			s -= v * v
		}
		if !(s > 0) || math.IsInf(s, 0) {
			return false
		}
		d := math.Sqrt(s)
		lj[j] = d
		inv := 1 / d
		ljk := lj[:j]
		for i := j + 1; i < n; i++ {
			li := l[i*n : i*n+j+1]
			t := a[i*n+j]
			for k, v := range li[:len(ljk)] {
				t -= v * ljk[k]
			}
			li[j] = t * inv
		}
		for i := 0; i < j; i++ {
			l[i*n+j] = 0
		}
	}
	return true
}

// forwardSolve solves L y = b in place (b becomes y); L is n x n lower.
func forwardSolve(l, b []float64, n int) {
	b = b[:n]
	for i := 0; i < n; i++ {
		li := l[i*n : i*n+i+1]
		s := b[i]
		for k, v := range li[:i] {
			s -= v * b[k]
		}
		b[i] = s / li[i]
	}
}

// backSolveT solves Lᵀ x = y in place (y becomes x); L is n x n lower.
func backSolveT(l, y []float64, n int) {
	l, y = l[:n*n], y[:n]
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
	if n == 2 { // the same operations as the loops below, unrolled
		l = l[:4]
		l00, l10, l11 := l[0], l[2], l[3]
		b = b[:2*m]
		for r := 0; r+2 <= len(b); r += 2 {
			y0 := b[r] / l00
			y1 := (b[r+1] - l10*y0) / l11
			x1 := y1 / l11
			b[r], b[r+1] = (y0-l10*x1)/l00, x1
		}
		return
	}
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
		if x-x != 0 { // NaN for ±Inf and NaN, 0 for every finite x
			return false
		}
	}
	return true
}

// finishSym completes dst (n x n), whose upper triangle (diagonal
// included) holds a symmetric product u, as (u + q) symmetrized: the
// diagonal gets u + q_ii and the entries off it
// ½((u + q_ij) + (u + q_ji)), mirrored, the same as mirroring u, adding q
// and calling symmetrize. q may be nil (nothing added). It reports whether
// every entry is finite.
func finishSym(dst, q []float64, n int) bool {
	dst = dst[:n*n]
	var chk float64
	if q == nil {
		for i := 0; i < n; i++ {
			row := dst[i*n : i*n+n]
			chk += row[i] * 0
			for j := i + 1; j < n; j++ {
				v := row[j]
				chk += v * 0
				dst[j*n+i] = v
			}
		}
		return chk == 0
	}
	q = q[:n*n]
	for i := 0; i < n; i++ {
		row := dst[i*n : i*n+n]
		qi := q[i*n : i*n+n]
		row[i] += qi[i]
		chk += row[i] * 0
		for j := i + 1; j < n; j++ {
			u := row[j]
			v := 0.5 * ((u + qi[j]) + (u + q[j*n+i]))
			chk += v * 0
			row[j] = v
			dst[j*n+i] = v
		}
	}
	return chk == 0 // x*0 is NaN for ±Inf and NaN, which then stays
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

// semiChol writes into l (n x n, upper triangle zeroed) a lower triangular
// factor of the symmetric positive semi-definite matrix a, with l lᵀ = a:
// the Cholesky factor, except that a pivot at most 1e-12 times the largest
// diagonal entry is taken as zero and gives a zero column (a noise
// covariance with noise-free components, or of rank one per axis as the
// discrete white-noise acceleration model's). The entries below such a
// pivot must then be at most 1e-6 times the largest diagonal entry (for a
// PSD matrix they are bounded by sqrt(pivot · diagonal)). It reports false
// if a is not PSD by that test or has non-finite entries. l must not alias a.
func semiChol(l, a []float64, n int) bool {
	var dmax float64
	for i := 0; i < n; i++ {
		d := a[i*n+i]
		if !(d >= 0) || math.IsInf(d, 0) {
			return false
		}
		dmax = max(dmax, d)
	}
	tol, offTol := 1e-12*dmax, 1e-6*dmax
	for j := 0; j < n; j++ {
		for i := 0; i < j; i++ {
			l[i*n+j] = 0
		}
		s := a[j*n+j]
		for k := 0; k < j; k++ {
			s -= l[j*n+k] * l[j*n+k]
		}
		if s <= tol {
			if s < -tol {
				return false
			}
			l[j*n+j] = 0
			for i := j + 1; i < n; i++ {
				t := a[i*n+j]
				for k := 0; k < j; k++ {
					t -= l[i*n+k] * l[j*n+k]
				}
				if !(math.Abs(t) <= offTol) {
					return false
				}
				l[i*n+j] = 0
			}
			continue
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
	}
	return allFinite(l[:n*n])
}

// lqLower triangularises the n x m matrix a (row-major, m >= n) in place by
// Householder reflections applied from the right, a = [L 0] Q with Q
// orthogonal, and copies the lower triangular L (n x n, upper triangle
// zeroed, diagonal >= 0) into l. Then l lᵀ = a aᵀ: this is the "qr" step of
// square-root filters (the R factor of the QR decomposition of aᵀ is lᵀ),
// done on rows so that the row-major compound matrix needs no transpose.
// Each reflection is H = I − τ v vᵀ with v = x − α e₁, α = −sign(x₁)‖x‖,
// τ = 2/(vᵀv) (Golub & Van Loan 2013, "Matrix Computations", 4th ed.,
// §5.1, from memory). The norm is scaled by the largest entry against overflow.
// l must not alias a.
func lqLower(l, a []float64, n, m int) {
	for i := 0; i < n; i++ {
		x := a[i*m+i : i*m+m]
		var amax float64
		for _, v := range x {
			amax = max(amax, math.Abs(v))
		}
		if amax == 0 {
			continue // row already zero beyond the diagonal
		}
		var ss float64
		for _, v := range x {
			v /= amax
			ss += v * v
		}
		sigma := amax * math.Sqrt(ss)
		alpha := -sigma
		if x[0] < 0 {
			alpha = sigma
		}
		x[0] -= alpha // x is now v
		// vᵀv = 2σ(σ + |x₁|) = −2α·v₁ with v₁ = x₁ − α.
		tau := 1 / (-alpha * x[0])
		for r := i + 1; r < n; r++ {
			y := a[r*m+i : r*m+m][:len(x)]
			var s float64
			for j, v := range x {
				s += y[j] * v
			}
			s *= tau
			for j, v := range x {
				y[j] -= s * v
			}
		}
		x[0] = alpha
		for j := 1; j < len(x); j++ {
			x[j] = 0
		}
	}
	for i := 0; i < n; i++ {
		neg := a[i*m+i] < 0 // flip column i so the diagonal is >= 0
		for r := 0; r < n; r++ {
			v := 0.0
			if r >= i {
				v = a[r*m+i]
				if neg {
					v = -v
				}
			}
			l[r*n+i] = v
		}
	}
}

// cholUpdate replaces the lower Cholesky factor l (n x n, diagonal >= 0) of
// A by that of A + x xᵀ, by a Givens rotation of each column of l with x
// (Golub & Van Loan 2013, §6.5, from memory). x is overwritten.
func cholUpdate(l, x []float64, n int) {
	for k := 0; k < n; k++ {
		xk := x[k]
		if xk == 0 {
			continue
		}
		lkk := l[k*n+k]
		r := math.Hypot(lkk, xk)
		c, s := lkk/r, xk/r
		l[k*n+k] = r
		for i := k + 1; i < n; i++ {
			lik := l[i*n+k]
			l[i*n+k] = c*lik + s*x[i]
			x[i] = c*x[i] - s*lik
		}
	}
}

// cholDowndate replaces the lower Cholesky factor l (n x n) of A by that of
// A − x xᵀ, by hyperbolic rotations (Golub & Van Loan 2013, §6.5). It
// reports false, leaving l partly changed, if A − x xᵀ is not positive
// definite (a pivot L_kk² − x_k² is not positive). x is overwritten.
func cholDowndate(l, x []float64, n int) bool {
	for k := 0; k < n; k++ {
		xk := x[k]
		if xk == 0 {
			continue
		}
		lkk := l[k*n+k]
		r2 := (lkk - xk) * (lkk + xk)
		if !(r2 > 0) || !(lkk > 0) || math.IsInf(r2, 0) {
			return false
		}
		r := math.Sqrt(r2)
		c, s := r/lkk, xk/lkk
		l[k*n+k] = r
		ic := 1 / c
		for i := k + 1; i < n; i++ {
			lik := (l[i*n+k] - s*x[i]) * ic
			l[i*n+k] = lik
			x[i] = c*x[i] - s*lik
		}
	}
	return true
}

// mulLLt sets dst (n x n) = l lᵀ for a lower triangular l. dst must not
// alias l.
func mulLLt(dst, l []float64, n int) {
	for i := 0; i < n; i++ {
		li := l[i*n : i*n+i+1]
		for j := 0; j <= i; j++ {
			lj := l[j*n : j*n+j+1]
			var s float64
			for k, v := range lj {
				s += li[k] * v
			}
			dst[i*n+j] = s
			dst[j*n+i] = s
		}
	}
}

// Jitter repair of a failed Cholesky factorization; see jitter.chol.
const (
	// DefaultJitterMax is the largest relative jitter tried when a
	// config's JitterMax is zero.
	DefaultJitterMax = 1e-3
	// jitterTiny keeps the jitter positive when the trace is zero: the
	// smallest positive normal float64.
	jitterTiny = 0x1p-1022
)

// jitter is the optional repair of a covariance whose Cholesky
// factorization fails, shared by the Gaussian filters: add ε·(tr/n + tiny)·I
// for ε = eps0, 10·eps0, ... up to epsMax, retrying the factorization after
// each. It counts the repaired factorizations since Reset. eps0 = 0 turns
// it off. This is common practice with no single source.
type jitter struct {
	eps0, epsMax float64
	repairs      int
}

// newJitter checks and resolves the Jitter and JitterMax fields of a config
// for the filter called name.
func newJitter(name string, eps0, epsMax float64) (jitter, error) {
	if epsMax == 0 {
		epsMax = DefaultJitterMax
	}
	if !(eps0 >= 0) || math.IsInf(eps0, 0) || !(epsMax > 0) || math.IsInf(epsMax, 0) {
		return jitter{}, errors.New("filters: " + name + ": Jitter must be >= 0 and JitterMax positive, both finite")
	}
	if eps0 > epsMax {
		return jitter{}, errors.New("filters: " + name + ": Jitter must not exceed JitterMax")
	}
	return jitter{eps0: eps0, epsMax: epsMax}, nil
}

// chol writes the lower Cholesky factor of a (n x n) into l (l must not
// alias a). If a is not positive definite and the repair is on, a is
// changed in place to a + ε·(tr(a)/n + tiny)·I with the smallest
// ε = eps0·10^j <= epsMax that makes the factorization succeed, and the
// repair is counted. It reports false if the factorization fails (a is then
// left as it was).
func (j *jitter) chol(l, a []float64, n int) bool {
	if cholesky(l, a, n) {
		return true
	}
	if j.eps0 == 0 {
		return false
	}
	var tr float64
	for i := 0; i < n; i++ {
		tr += a[i*n+i]
	}
	if math.IsNaN(tr) || math.IsInf(tr, 0) {
		return false
	}
	scale := max(tr/float64(n), 0) + jitterTiny
	var added float64
	// The last ε tried is the largest eps0·10^j not above epsMax, allowing
	// for the rounding of the repeated products.
	for eps := j.eps0; eps <= j.epsMax*(1+1e-9); eps *= 10 {
		d := eps*scale - added
		for i := 0; i < n; i++ {
			a[i*n+i] += d
		}
		added += d
		if cholesky(l, a, n) {
			j.repairs++
			return true
		}
	}
	for i := 0; i < n; i++ {
		a[i*n+i] -= added
	}
	return false
}
