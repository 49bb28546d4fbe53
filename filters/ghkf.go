package filters

import (
	"errors"
	"math/rand/v2"
)

// GHKFConfig configures NewGHKF. The zero value gives the defaults.
type GHKFConfig struct {
	// Order is the number p of Gauss-Hermite nodes per dimension, in
	// [2, 64]; the filter uses p^n points. If zero, 3 is used (exact for
	// polynomials of degree 5 in each coordinate).
	Order int
	// Jitter and JitterMax configure the jitter repair of a failed
	// Cholesky factorization of P or S, as in UKFConfig. Default 0: off.
	Jitter, JitterMax float64
}

// DefaultGHKFOrder is the order used when GHKFConfig.Order is zero.
const DefaultGHKFOrder = 3

// MaxGHKFPoints is the largest tensor-product set NewGHKF accepts.
const MaxGHKFPoints = maxSigmaPoints

// GHKF is the Gauss-Hermite Kalman filter of Ito & Xiong 2000, "Gaussian
// filters for nonlinear filtering problems", IEEE TAC 45(5): a Gaussian
// filter whose moment integrals use the tensor product of the p-point
// Gauss-Hermite rule, the points x + L ξ for every ξ in {ξ₁..ξ_p}ⁿ with
// weight the product of the 1-D weights (L the Cholesky factor of P).
// Parameter: Order p (default 3). The 1-D nodes and weights come from the
// Golub-Welsch eigenvalue method at set-up (see hermiteRule).
//
// The cost grows as p^n: p = 3 gives 243 points in 5 dimensions and 59049
// in 10. NewGHKF refuses a set of more than MaxGHKFPoints (100000) points.
//
// The steps are those of UKF (fresh points for the update, Joseph form of
// the covariance update; see there), with the Gauss-Hermite set. The rule
// is exact for polynomials of degree up to 2p−1 in each coordinate, so on a
// linear-Gaussian model the GHKF equals the Kalman filter. Angles are
// handled as in UKF.
//
// The GHKF supports additive noise only: NewGHKF refuses a model with FW
// or HV. It returns ErrNotPosDef when P or S has no Cholesky factor. It
// implements Filter, Innovator and Repairer.
type GHKF struct {
	c spCore
}

// NewGHKF returns a Gauss-Hermite Kalman filter for m.
func NewGHKF(m *Model, cfg GHKFConfig) (*GHKF, error) {
	m.check()
	checkAngles(m)
	if !m.Additive() {
		return nil, errors.New("filters: ghkf needs additive noise (the model has FW or HV)")
	}
	p := cfg.Order
	if p == 0 {
		p = DefaultGHKFOrder
	}
	jit, err := newJitter("ghkf", cfg.Jitter, cfg.JitterMax)
	if err != nil {
		return nil, err
	}
	f := &GHKF{}
	mk := func(n int) (sigmaSet, error) { return hermiteSet(n, p) }
	if err := f.c.init(m, mk, false, jit); err != nil {
		return nil, errors.New("filters: ghkf: " + err.Error())
	}
	return f, nil
}

// Points returns the number of points of the set, Order^Nx.
func (f *GHKF) Points() int { return f.c.sp.np }

// Reset implements Filter. rng is not used.
func (f *GHKF) Reset(x0, p0 []float64, rng *rand.Rand) error { return f.c.reset(x0, p0) }

// Predict implements Filter.
func (f *GHKF) Predict(k int) error { return f.c.predict(k) }

// Update implements Filter.
func (f *GHKF) Update(z []float64, k int) error { return f.c.update(z, k) }

// EstimateTo implements Filter.
func (f *GHKF) EstimateTo(x, p []float64) { f.c.estimateTo(x, p) }

// InnovationTo implements Innovator. s may be nil. It reports false after
// Predict until an Update with a measurement succeeds.
func (f *GHKF) InnovationTo(nu, s []float64) bool { return f.c.innovationTo(nu, s) }

// Repairs implements Repairer: the jitter repairs since Reset.
func (f *GHKF) Repairs() int { return f.c.jit.repairs }
