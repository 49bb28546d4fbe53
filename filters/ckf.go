package filters

import (
	"errors"
	"math/rand/v2"
)

// CKFConfig configures NewCKF. The zero value gives the defaults: the
// cubature rule has no parameters; the jitter repair is off.
type CKFConfig struct {
	// Jitter and JitterMax configure the jitter repair of a failed
	// Cholesky factorization of P or S, as in UKFConfig. Default 0: off.
	Jitter, JitterMax float64
}

// CKF is the cubature Kalman filter of Arasaratnam & Haykin 2009, "Cubature
// Kalman filters", IEEE TAC 54(6): a Gaussian filter whose moment integrals
// use the third-degree spherical-radial cubature rule, the 2n points
// x ± √n Lⱼ (Lⱼ column j of the Cholesky factor of P), each of weight
// 1/(2n), exact for polynomials of degree three. It has
// no parameters (CKFConfig holds only the jitter repair).
//
// The steps are those of Arasaratnam & Haykin 2009 (time update with
// points of the posterior, measurement update with fresh points of the
// prediction), with the covariances formed from deviations about the means
// and the posterior covariance in the Joseph form of the sigma-point
// filters (see UKF) rather than P − K Pzz Kᵀ; the two agree in exact
// arithmetic. The rule is the scaled unscented set with α = 1, β = 0,
// κ = 0 without its zero-weight central point, so the CKF equals that UKF
// up to rounding. Angles are handled as in UKF.
//
// The CKF supports additive noise only: NewCKF refuses a model with FW or
// HV. It returns ErrNotPosDef when P or S has no Cholesky factor. It
// implements Filter, Innovator and Repairer.
type CKF struct {
	c spCore
}

// NewCKF returns a cubature Kalman filter for m.
func NewCKF(m *Model, cfg CKFConfig) (*CKF, error) {
	m.check()
	checkAngles(m)
	if !m.Additive() {
		return nil, errors.New("filters: ckf needs additive noise (the model has FW or HV)")
	}
	jit, err := newJitter("ckf", cfg.Jitter, cfg.JitterMax)
	if err != nil {
		return nil, err
	}
	f := &CKF{}
	mk := func(n int) (sigmaSet, error) { return cubatureSet(n), nil }
	if err := f.c.init(m, mk, false, jit); err != nil {
		return nil, errors.New("filters: ckf: " + err.Error())
	}
	return f, nil
}

// Reset implements Filter. rng is not used.
func (f *CKF) Reset(x0, p0 []float64, rng *rand.Rand) error { return f.c.reset(x0, p0) }

// Predict implements Filter.
func (f *CKF) Predict(k int) error { return f.c.predict(k) }

// Update implements Filter.
func (f *CKF) Update(z []float64, k int) error { return f.c.update(z, k) }

// EstimateTo implements Filter.
func (f *CKF) EstimateTo(x, p []float64) { f.c.estimateTo(x, p) }

// InnovationTo implements Innovator. s may be nil. It reports false after
// Predict until an Update with a measurement succeeds.
func (f *CKF) InnovationTo(nu, s []float64) bool { return f.c.innovationTo(nu, s) }

// Repairs implements Repairer: the jitter repairs since Reset.
func (f *CKF) Repairs() int { return f.c.jit.repairs }
