package filters

import "errors"

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
	s, err := scaledSet(n, alpha, beta, kappa)
	if err != nil {
		return nil, nil, errors.New("filters: ukf: " + err.Error())
	}
	return sigmaTransform(&s, mean, cov, ny, g, angles)
}

// sigmaTransform is the moment transform of y = g(x), x ~ N(mean, cov), by
// the set s. It allocates; it is for tests and set-up.
func sigmaTransform(s *sigmaSet, mean, cov []float64, ny int, g func(dst, x []float64), angles []int) (ym, ycov []float64, err error) {
	n, np := s.n, s.np
	l := make([]float64, n*n)
	if !cholesky(l, cov, n) {
		return nil, nil, ErrNotPosDef
	}
	s.reserve(max(n, ny))
	dxT := make([]float64, n*np)
	s.devTo(dxT, l)
	pts := make([]float64, np*n)
	s.pointsTo(pts, mean, dxT)
	ys := make([]float64, np*ny)
	for i := 0; i < np; i++ {
		g(ys[i*ny:(i+1)*ny], pts[i*n:(i+1)*n])
	}
	ym = make([]float64, ny)
	s.mean(ym, ys, ny, angles)
	dt := make([]float64, ny*np)
	s.deviate(dt, ys, ym, ny, angles)
	ycov = make([]float64, ny*ny)
	s.cov(ycov, dt, ny)
	return ym, ycov, nil
}
