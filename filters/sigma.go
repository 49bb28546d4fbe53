package filters

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"gonum.org/v1/gonum/mat"
)

// sigmaSet is a weighted point set for the moments of an n-dimensional
// Gaussian: unit points uᵢ with Σ Wmᵢ = 1, Σ Wmᵢ uᵢ = 0 and
// Σ Wcᵢ uᵢ uᵢᵀ = I, mapped to N(x, P) as Xᵢ = x + L uᵢ with L L ᵀ = P.
// The unscented sets (scaled, symmetric, simplex), the cubature set and the
// Gauss-Hermite tensor set all take this form, and the sigma-point filters
// differ only in the set.
//
// Layout: a point array has one point per row (np x dim); deviations are
// kept transposed (dim x np) so that covariances are dot products of rows.
type sigmaSet struct {
	n, np int

	// Pair sets (scaled, symmetric, cubature) are ±c·eⱼ for j = 0..n-1,
	// after a central point u₀ = 0 if center: point order 0 (centre),
	// 1..n (+c eⱼ), n+1..2n (−c eⱼ); without a centre 0..n-1 and n..2n-1.
	pairs, center bool
	c             float64

	u      []float64 // other sets: unit points, np x n (row i is uᵢ)
	wm, wc []float64 // mean and covariance weights (np)

	// uniform: Wmᵢ = Wcᵢ = wu for every i >= 1 (row 0 may differ in Wc).
	uniform bool
	wu      float64

	wk []float64 // workspace for weighted deviations (rows x np), see reserve
}

// maxSigmaPoints is the largest point set a filter accepts at set-up.
const maxSigmaPoints = 100000

// reserve sizes the workspace for deviations with up to rows rows.
func (s *sigmaSet) reserve(rows int) {
	if !s.uniform && len(s.wk) < rows*s.np {
		s.wk = make([]float64, rows*s.np)
	}
}

func (s *sigmaSet) setUniform() {
	s.uniform = true
	s.wu = s.wm[s.np-1]
	for i := 1; i < s.np; i++ {
		if s.wm[i] != s.wu || s.wc[i] != s.wu {
			s.uniform = false
			return
		}
	}
}

// scaledSet is the scaled unscented set (Julier 2002, "The scaled unscented
// transformation", Proc. ACC; in the form of Wan & van der Merwe 2000, "The
// unscented Kalman filter for nonlinear estimation"): λ = α²(n+κ) − n,
// points 0 and ±√(n+λ) eⱼ, Wm₀ = λ/(n+λ), Wc₀ = Wm₀ + 1 − α² + β,
// Wᵢ = 1/(2(n+λ)). With α = 1, β = 0 it is the symmetric set of Julier &
// Uhlmann 1997, W₀ = κ/(n+κ), points ±√(n+κ) eⱼ.
func scaledSet(n int, alpha, beta, kappa float64) (sigmaSet, error) {
	if !(alpha > 0) || math.IsInf(alpha, 0) || math.IsNaN(beta) || math.IsInf(beta, 0) || math.IsNaN(kappa) || math.IsInf(kappa, 0) {
		return sigmaSet{}, errors.New("Alpha must be positive and finite, Beta and Kappa finite")
	}
	nf := float64(n)
	lam := alpha*alpha*(nf+kappa) - nf
	sc := nf + lam
	if !(sc > 0) {
		return sigmaSet{}, errors.New("n + Kappa must be positive")
	}
	np := 2*n + 1
	s := sigmaSet{n: n, np: np, pairs: true, center: true, c: math.Sqrt(sc),
		wm: make([]float64, np), wc: make([]float64, np)}
	wi := 1 / (2 * sc)
	for i := range s.wm {
		s.wm[i], s.wc[i] = wi, wi
	}
	s.wm[0] = lam / sc
	s.wc[0] = s.wm[0] + 1 - alpha*alpha + beta
	s.setUniform()
	return s, nil
}

// cubatureSet is the third-degree spherical-radial cubature rule of
// Arasaratnam & Haykin 2009, "Cubature Kalman filters", IEEE TAC 54(6),
// the 2n points ±√n eⱼ, each of weight 1/(2n).
func cubatureSet(n int) sigmaSet {
	np := 2 * n
	s := sigmaSet{n: n, np: np, pairs: true, c: math.Sqrt(float64(n)),
		wm: make([]float64, np), wc: make([]float64, np)}
	for i := range s.wm {
		s.wm[i], s.wc[i] = 1/float64(np), 1/float64(np)
	}
	s.setUniform()
	return s
}

// simplexSet is the spherical simplex set of Julier 2003, "The spherical
// simplex unscented transformation", Proc. ACC: n+2 points, the centre with
// weight W₀ ∈ [0, 1) and n+1 points of weight W₁ = (1−W₀)/(n+1) on a
// sphere, built dimension by dimension: in one dimension 0, ∓1/√(2W₁); going
// to dimension j the existing points get the component −1/√(j(j+1)W₁)
// (the centre 0) and a new point 0ⱼ₋₁ with j/√(j(j+1)W₁) is added.
func simplexSet(n int, w0 float64) (sigmaSet, error) {
	if !(w0 >= 0 && w0 < 1) {
		return sigmaSet{}, errors.New("W0 must lie in [0, 1)")
	}
	np := n + 2
	s := sigmaSet{n: n, np: np, u: make([]float64, np*n),
		wm: make([]float64, np), wc: make([]float64, np)}
	w1 := (1 - w0) / float64(n+1)
	s.wm[0], s.wc[0] = w0, w0
	for i := 1; i < np; i++ {
		s.wm[i], s.wc[i] = w1, w1
	}
	s.u[1*n+0] = -1 / math.Sqrt(2*w1)
	s.u[2*n+0] = 1 / math.Sqrt(2*w1)
	for j := 2; j <= n; j++ { // dimension j: component j-1
		d := 1 / math.Sqrt(float64(j*(j+1))*w1)
		for i := 1; i <= j; i++ {
			s.u[i*n+j-1] = -d
		}
		s.u[(j+1)*n+j-1] = float64(j) * d
	}
	s.setUniform()
	return s, nil
}

// hermiteSet is the tensor-product Gauss-Hermite rule of order p for the
// standard normal in n dimensions (Ito & Xiong 2000, "Gaussian filters for
// nonlinear filtering problems", IEEE TAC 45(5)): the p^n points
// (ξ_{i₁}, ..., ξ_{iₙ}) with weight Π wᵢₖ, from the 1-D nodes and weights
// of hermiteRule. It refuses more than maxSigmaPoints points.
func hermiteSet(n, p int) (sigmaSet, error) {
	if p < 2 || p > 64 {
		return sigmaSet{}, errors.New("Order must lie in [2, 64]")
	}
	np := 1
	for i := 0; i < n; i++ {
		np *= p
		if np > maxSigmaPoints {
			return sigmaSet{}, fmt.Errorf("order %d in %d dimensions needs %d^%d points, more than the limit of %d", p, n, p, n, maxSigmaPoints)
		}
	}
	xi, w := hermiteRule(p)
	s := sigmaSet{n: n, np: np, u: make([]float64, np*n),
		wm: make([]float64, np), wc: make([]float64, np)}
	idx := make([]int, n)
	for i := 0; i < np; i++ {
		wt := 1.0
		for j, d := range idx {
			s.u[i*n+j] = xi[d]
			wt *= w[d]
		}
		s.wm[i], s.wc[i] = wt, wt
		for j := n - 1; j >= 0; j-- { // next multi-index, last digit fastest
			idx[j]++
			if idx[j] < p {
				break
			}
			idx[j] = 0
		}
	}
	s.setUniform()
	return s, nil
}

// hermiteRule returns the p nodes (ascending) and weights of Gauss-Hermite
// quadrature for the standard normal density, ∫ f(x) φ(x) dx ≈ Σ wᵢ f(ξᵢ),
// exact for polynomials of degree up to 2p−1. They come from the
// Golub-Welsch method (Golub & Welsch 1969, "Calculation of Gauss
// quadrature rules", Math. Comp. 23): the nodes are the eigenvalues of the
// Jacobi matrix of the probabilists' Hermite polynomials
// (He_{k+1} = x He_k − k He_{k−1}: zero diagonal, off-diagonal √k) and
// each weight is the squared first component of its unit eigenvector (the
// total mass of φ is 1). The rule is then made exactly symmetric, ξ and w
// averaged with their mirror images. In the physicists' convention (weight
// e^{−x²}) the nodes are ξ/√2 and the weights w·√π. It allocates; it is
// for set-up.
func hermiteRule(p int) (xi, w []float64) {
	j := mat.NewSymDense(p, nil)
	for k := 1; k < p; k++ {
		j.SetSym(k-1, k, math.Sqrt(float64(k)))
	}
	var eig mat.EigenSym
	if !eig.Factorize(j, true) {
		panic("filters: Gauss-Hermite eigendecomposition failed")
	}
	vals := eig.Values(nil)
	var vec mat.Dense
	eig.VectorsTo(&vec)
	order := make([]int, p)
	for i := range order {
		order[i] = i
	}
	sort.Slice(order, func(a, b int) bool { return vals[order[a]] < vals[order[b]] })
	xi, w = make([]float64, p), make([]float64, p)
	for i, o := range order {
		xi[i] = vals[o]
		v := vec.At(0, o)
		w[i] = v * v
	}
	for i := 0; i < p/2; i++ {
		a := 0.5 * (xi[p-1-i] - xi[i])
		b := 0.5 * (w[i] + w[p-1-i])
		xi[i], xi[p-1-i] = -a, a
		w[i], w[p-1-i] = b, b
	}
	if p%2 == 1 {
		xi[p/2] = 0
	}
	return xi, w
}

// devTo writes the deviations L uᵢ of the points from the mean, transposed,
// into dxT (n x np), for a lower triangular la (n x n).
func (s *sigmaSet) devTo(dxT, la []float64) {
	n, np := s.n, s.np
	if s.pairs {
		off := 0
		if s.center {
			off = 1
		}
		for r := 0; r < n; r++ {
			row := dxT[r*np : r*np+np]
			if s.center {
				row[0] = 0
			}
			lr := la[r*n : r*n+n]
			for j, v := range lr {
				v *= s.c
				row[off+j] = v
				row[off+n+j] = -v
			}
		}
		return
	}
	for r := 0; r < n; r++ {
		lr := la[r*n : r*n+r+1]
		row := dxT[r*np : r*np+np]
		for i := range row {
			ui := s.u[i*n : i*n+len(lr)]
			var d float64
			for j, v := range lr {
				d += v * ui[j]
			}
			row[i] = d
		}
	}
}

// pointsTo writes the points x + L uᵢ into the rows of pts (np x n) from
// the deviations made by devTo; the components of the mean past len(x) are
// zero (the noise part of an augmented state).
func (s *sigmaSet) pointsTo(pts, x, dxT []float64) {
	n, np := s.n, s.np
	pts = pts[:np*n]
	for r := 0; r < n; r++ {
		m := 0.0
		if r < len(x) {
			m = x[r]
		}
		row := dxT[r*np : r*np+np]
		for i, d := range row {
			pts[i*n+r] = m + d
		}
	}
}

// mean writes the weighted mean of the np rows of y (each of length m) into
// dst. It is anchored at row 0, dst = y₀ + Σᵢ Wmᵢ (yᵢ − y₀) (the same as
// Σ Wmᵢ yᵢ since the weights sum to one, but without the cancellation that
// a large negative Wm₀ brings for small α). Components listed in angles get
// the weighted circular mean, y₀ + atan2(Σ Wmᵢ sin dᵢ, Σ Wmᵢ cos dᵢ) with
// dᵢ = yᵢ − y₀, wrapped to (-π, π].
func (s *sigmaSet) mean(dst, y []float64, m int, angles []int) {
	np := s.np
	y0 := y[:m]
	for j := 0; j < m; j++ {
		var a float64
		if s.uniform {
			for i := 1; i < np; i++ {
				a += y[i*m+j] - y0[j]
			}
			a *= s.wu
		} else {
			for i := 1; i < np; i++ {
				a += s.wm[i] * (y[i*m+j] - y0[j])
			}
		}
		dst[j] = y0[j] + a
	}
	for _, j := range angles {
		// Σ Wᵢ cos dᵢ = 1 − 2 Σ Wᵢ sin²(dᵢ/2), written so to keep its
		// accuracy when Wm₀ is large and negative.
		var ss, sh float64
		for i := 1; i < np; i++ {
			h, c := math.Sincos((y[i*m+j] - y0[j]) / 2)
			w := s.wu
			if !s.uniform {
				w = s.wm[i]
			}
			ss += w * 2 * h * c // Wᵢ sin dᵢ
			sh += w * h * h
		}
		dst[j] = wrapAngle(y0[j] + math.Atan2(ss, 1-2*sh))
	}
}

// deviate writes the deviations yᵢ − mean of the np rows of y (length m),
// wrapped for the components listed in angles, transposed into dt
// (m x np): row j of dt holds component j of every deviation.
func (s *sigmaSet) deviate(dt, y, mean []float64, m int, angles []int) {
	np := s.np
	y, mean = y[:np*m], mean[:m]
	for j, mj := range mean {
		row := dt[j*np : j*np+np]
		for i := range row {
			row[i] = y[i*m+j] - mj
		}
	}
	for _, j := range angles {
		row := dt[j*np : j*np+np]
		for i, v := range row {
			row[i] = wrapAngle(v)
		}
	}
}

// cov sets dst (m x m) = Σᵢ Wcᵢ dᵢ dᵢᵀ for transposed deviations dt
// (m x np). For a uniform set it is wu·(dt dtᵀ) + (Wc₀ − wu) d₀ d₀ᵀ.
func (s *sigmaSet) cov(dst, dt []float64, m int) {
	np := s.np
	if s.uniform {
		abt(dst, dt, dt, m, np, m, true)
		c0 := s.wc[0] - s.wu
		for a := 0; a < m; a++ {
			da := c0 * dt[a*np]
			for b := 0; b < m; b++ {
				dst[a*m+b] = s.wu*dst[a*m+b] + da*dt[b*np]
			}
		}
		return
	}
	wk := s.weigh(dt, m)
	abt(dst, dt, wk, m, np, m, true)
}

// covAdd sets dst (m x m) to cov(dt) + q, symmetrized, as cov, adding q (if
// not nil) and symmetrize would, in one pass over the upper triangle. It
// reports whether every entry is finite.
func (s *sigmaSet) covAdd(dst, dt, q []float64, m int) bool {
	np := s.np
	if !s.uniform {
		abtUpper(dst, dt, s.weigh(dt, m), m, np, m, true)
		return finishSym(dst, q, m)
	}
	dst = dst[:m*m]
	abtUpper(dst, dt, dt, m, np, m, true)
	wu, c0 := s.wu, s.wc[0]-s.wu
	var chk float64
	for a := 0; a < m; a++ {
		d0a := dt[a*np]
		da := c0 * d0a
		row := dst[a*m : a*m+m]
		v := wu*row[a] + da*d0a
		if q != nil {
			v += q[a*m+a]
		}
		row[a] = v
		chk += v * 0
		for b := a + 1; b < m; b++ {
			d0b := dt[b*np]
			u := wu * row[b]
			xab, xba := u+da*d0b, u+(c0*d0b)*d0a
			if q != nil {
				xab += q[a*m+b]
				xba += q[b*m+a]
			}
			v := 0.5 * (xab + xba)
			chk += v * 0
			row[b] = v
			dst[b*m+a] = v
		}
	}
	return chk == 0 // x*0 is NaN for ±Inf and NaN, which then stays
}

// cross sets dst (nx x m) = Σᵢ Wcᵢ dxᵢ dzᵢᵀ for transposed deviations dxT
// (at least nx rows of np) and dzT (m x np).
func (s *sigmaSet) cross(dst, dxT, dzT []float64, nx, m int) {
	np := s.np
	if s.uniform {
		abt(dst, dxT, dzT, nx, np, m, false)
		c0 := s.wc[0] - s.wu
		for a := 0; a < nx; a++ {
			da := c0 * dxT[a*np]
			for b := 0; b < m; b++ {
				dst[a*m+b] = s.wu*dst[a*m+b] + da*dzT[b*np]
			}
		}
		return
	}
	wk := s.weigh(dzT, m)
	abt(dst, dxT, wk, nx, np, m, false)
}

// weigh writes Wcᵢ·dt[r][i] into the workspace and returns it.
func (s *sigmaSet) weigh(dt []float64, m int) []float64 {
	np := s.np
	wk := s.wk[:m*np]
	for r := 0; r < m; r++ {
		row := dt[r*np : r*np+np]
		out := wk[r*np : r*np+np]
		for i, v := range row {
			out[i] = s.wc[i] * v
		}
	}
	return wk
}
