package filters

import (
	"errors"
	"math"
)

// sigmaWeights are the weights of the scaled unscented transform of an
// n-dimensional Gaussian (Julier 2002, "The scaled unscented
// transformation"; in the form of Wan & van der Merwe 2000, "The unscented
// Kalman filter for nonlinear estimation"):
//
//	λ = α²(n+κ) − n,  points x, x ± √(n+λ)·Lᵢ  (Lᵢ column i of chol(P)),
//	Wm₀ = λ/(n+λ),  Wc₀ = Wm₀ + 1 − α² + β,  Wᵢ = 1/(2(n+λ)), i = 1..2n.
//
// Point order in a sigma-point array: row 0 is the mean, rows 1..n are
// x + c·Lᵢ and rows n+1..2n are x − c·Lᵢ, with c = √(n+λ).
type sigmaWeights struct {
	n        int
	c        float64 // √(n+λ)
	wm0, wc0 float64 // weights of the central point for the mean and the covariance
	wi       float64 // weight of every other point (mean and covariance)
}

func newSigmaWeights(n int, alpha, beta, kappa float64) (sigmaWeights, error) {
	if !(alpha > 0) || math.IsInf(alpha, 0) || math.IsNaN(beta) || math.IsInf(beta, 0) || math.IsNaN(kappa) || math.IsInf(kappa, 0) {
		return sigmaWeights{}, errors.New("filters: ukf: Alpha must be positive and finite, Beta and Kappa finite")
	}
	nf := float64(n)
	lam := alpha*alpha*(nf+kappa) - nf
	s := nf + lam
	if !(s > 0) {
		return sigmaWeights{}, errors.New("filters: ukf: n + Kappa must be positive")
	}
	w := sigmaWeights{n: n, c: math.Sqrt(s), wm0: lam / s, wi: 1 / (2 * s)}
	w.wc0 = w.wm0 + 1 - alpha*alpha + beta
	return w, nil
}

// points writes the 2n+1 sigma points of N(x, p) into the rows of pts
// ((2n+1) x n), using l (n x n) for the Cholesky factor of p. It reports
// false if p is not positive definite.
func (w *sigmaWeights) points(pts, l, x, p []float64) bool {
	n := w.n
	if !cholesky(l, p, n) {
		return false
	}
	copy(pts[:n], x)
	for i := 0; i < n; i++ { // point pair i uses column i of L
		plus := pts[(1+i)*n : (2+i)*n]
		minus := pts[(1+n+i)*n : (2+n+i)*n]
		for r := 0; r < n; r++ {
			d := w.c * l[r*n+i]
			plus[r] = x[r] + d
			minus[r] = x[r] - d
		}
	}
	return true
}

// mean writes the weighted mean of the 2n+1 rows of y (each of length m)
// into dst. It is anchored at row 0, dst = y₀ + Σᵢ Wᵢ (yᵢ − y₀) (the same
// as Σ Wᵢ yᵢ since the weights sum to one, but without the cancellation
// that a large negative Wm₀ brings for small α). Components listed in
// angles get the weighted circular mean, y₀ + atan2(Σ Wᵢ sin dᵢ, Σ Wᵢ cos dᵢ)
// with dᵢ = yᵢ − y₀, wrapped to (-π, π].
func (w *sigmaWeights) mean(dst, y []float64, m int, angles []int) {
	n := w.n
	y0 := y[:m]
	for j := 0; j < m; j++ {
		var s float64
		for i := 1; i <= 2*n; i++ {
			s += y[i*m+j] - y0[j]
		}
		dst[j] = y0[j] + w.wi*s
	}
	for _, j := range angles {
		// Σ Wᵢ cos dᵢ = 1 − 2 Σ Wᵢ sin²(dᵢ/2), written so to keep its
		// accuracy when Wm₀ is large and negative.
		var ss, sh float64
		for i := 1; i <= 2*n; i++ {
			h, c := math.Sincos((y[i*m+j] - y0[j]) / 2)
			ss += 2 * h * c // sin d
			sh += h * h
		}
		dst[j] = wrapAngle(y0[j] + math.Atan2(w.wi*ss, 1-2*w.wi*sh))
	}
}

// deviate writes the deviations yᵢ − mean of the 2n+1 rows of y (length
// m), wrapped for the components listed in angles, transposed into dt
// (m x (2n+1)): row j of dt holds component j of every deviation, so that
// the covariances below are dot products of rows.
func (w *sigmaWeights) deviate(dt, y, mean []float64, m int, angles []int) {
	np := 2*w.n + 1
	for i := 0; i < np; i++ {
		row := y[i*m : i*m+m]
		for j, v := range row {
			dt[j*np+i] = v - mean[j]
		}
	}
	for _, j := range angles {
		for i := 0; i < np; i++ {
			dt[j*np+i] = wrapAngle(dt[j*np+i])
		}
	}
}

// cov sets dst (m x m) = Σᵢ Wcᵢ dᵢ dᵢᵀ for the transposed deviations dt
// made by deviate: Wᵢ·(dt dtᵀ) + (Wc₀ − Wᵢ) d₀ d₀ᵀ.
func (w *sigmaWeights) cov(dst, dt []float64, m int) {
	np := 2*w.n + 1
	abt(dst, dt, dt, m, np, m, true)
	c0 := w.wc0 - w.wi
	for a := 0; a < m; a++ {
		da := dt[a*np]
		for b := 0; b < m; b++ {
			dst[a*m+b] = w.wi*dst[a*m+b] + c0*da*dt[b*np]
		}
	}
}

// crossFromChol sets dst (n x m) = Σᵢ Wcᵢ (Xᵢ − x) dᵢᵀ for sigma points X
// made by points from the Cholesky factor l and transposed deviations dt,
// using Xᵢ − x = ±c·Lᵢ directly (the central point contributes nothing):
// dst[r][s] = Wᵢ c Σⱼ L[r][j] (dt[s][1+j] − dt[s][1+n+j]).
func (w *sigmaWeights) crossFromChol(dst, l, dt []float64, m int) {
	n := w.n
	np := 2*n + 1
	f := w.wi * w.c
	for r := 0; r < n; r++ {
		lr := l[r*n : r*n+r+1] // L is lower triangular
		for s := 0; s < m; s++ {
			ds := dt[s*np : s*np+np]
			var acc float64
			for j, lv := range lr {
				acc += lv * (ds[1+j] - ds[1+n+j])
			}
			dst[r*m+s] = f * acc
		}
	}
}

// unscentedTransform returns the mean and covariance of y = g(x) for
// x ~ N(mean, cov) (n = len(mean), ny outputs) by the scaled unscented
// transform with parameters alpha, beta, kappa. Output components listed
// in angles are averaged on the circle and their deviations wrapped. It
// allocates and is meant for tests and set-up, not for filter steps.
func unscentedTransform(mean, cov []float64, ny int, g func(dst, x []float64), alpha, beta, kappa float64, angles []int) (ym, ycov []float64, err error) {
	n := len(mean)
	if len(cov) != n*n {
		panic("filters: dimension mismatch")
	}
	w, err := newSigmaWeights(n, alpha, beta, kappa)
	if err != nil {
		return nil, nil, err
	}
	pts := make([]float64, (2*n+1)*n)
	if !w.points(pts, make([]float64, n*n), mean, cov) {
		return nil, nil, ErrNotPosDef
	}
	ys := make([]float64, (2*n+1)*ny)
	for i := 0; i <= 2*n; i++ {
		g(ys[i*ny:(i+1)*ny], pts[i*n:(i+1)*n])
	}
	ym = make([]float64, ny)
	w.mean(ym, ys, ny, angles)
	dt := make([]float64, ny*(2*n+1))
	w.deviate(dt, ys, ym, ny, angles)
	ycov = make([]float64, ny*ny)
	w.cov(ycov, dt, ny)
	return ym, ycov, nil
}
