package filters

// UnscentedTransform exposes unscentedTransform to the external tests.
var UnscentedTransform = unscentedTransform

// Linear algebra of linalg.go, for its tests.
var (
	SemiChol     = semiChol
	LQLower      = lqLower
	CholUpdate   = cholUpdate
	CholDowndate = cholDowndate
	Cholesky     = cholesky
)

// HermiteRule exposes hermiteRule.
var HermiteRule = hermiteRule

// SigmaUnitSet returns the unit points (np x n, row i is uᵢ) and the mean
// and covariance weights of a point set: kind "scaled" (a, b, c = α, β, κ),
// "simplex" (a = W₀), "cubature", or "hermite" (order int(a)).
func SigmaUnitSet(kind string, n int, a, b, c float64) (u, wm, wc []float64, err error) {
	var s sigmaSet
	switch kind {
	case "scaled":
		s, err = scaledSet(n, a, b, c)
	case "simplex":
		s, err = simplexSet(n, a)
	case "cubature":
		s = cubatureSet(n)
	case "hermite":
		s, err = hermiteSet(n, int(a))
	default:
		panic("unknown set " + kind)
	}
	if err != nil {
		return nil, nil, nil, err
	}
	eye := make([]float64, n*n)
	identity(eye, n)
	dxT := make([]float64, n*s.np)
	s.devTo(dxT, eye)
	u = make([]float64, s.np*n)
	s.pointsTo(u, nil, dxT)
	return u, s.wm, s.wc, nil
}

// SigmaTransform is the moment transform of g by a set of SigmaUnitSet's
// kinds, through the code path of the filters.
func SigmaTransform(kind string, a, b, c float64, mean, cov []float64, ny int, g func(dst, x []float64), angles []int) (ym, ycov []float64, err error) {
	n := len(mean)
	var s sigmaSet
	switch kind {
	case "scaled":
		s, err = scaledSet(n, a, b, c)
	case "simplex":
		s, err = simplexSet(n, a)
	case "cubature":
		s = cubatureSet(n)
	case "hermite":
		s, err = hermiteSet(n, int(a))
	default:
		panic("unknown set " + kind)
	}
	if err != nil {
		return nil, nil, err
	}
	return sigmaTransform(&s, mean, cov, ny, g, angles)
}
