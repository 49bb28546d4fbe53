package filters

import (
	"errors"
	"math/rand/v2"
)

// EKFConfig configures NewEKF. The zero value gives the defaults.
type EKFConfig struct {
	// Step is the relative central-difference step used when the model has
	// no FJac or HJac: component i is perturbed by ±Step*max(1, |x_i|).
	// If zero, 1e-6 is used (about the cube root of the float64 epsilon,
	// which balances truncation and rounding error of central differences;
	// common practice, no source).
	Step float64
	// Jitter and JitterMax configure the jitter repair of a failed
	// Cholesky factorization of S, as in UKFConfig. Default 0: off.
	Jitter, JitterMax float64
}

// DefaultEKFStep is the central-difference step used when EKFConfig.Step
// is zero.
const DefaultEKFStep = 1e-6

// EKF is the extended Kalman filter: the Kalman filter (Kalman 1960) applied
// to the model linearised about the current estimate, as in Bar-Shalom, Li
// & Kirubarajan 2001, "Estimation with Applications to Tracking and
// Navigation", §10.3.
//
// The prediction is x = F(x), P = A P Aᵀ + Q with A = FJac at the previous
// estimate; the update linearises H at the predicted estimate,
// C = HJac(x), S = C P Cᵀ + R, K = P Cᵀ S⁻¹ (by Cholesky of S), and uses the
// Joseph form P = (I-KC) P (I-KC)ᵀ + K R Kᵀ (Bar-Shalom et al. 2001, §5.2).
// Innovations of Model.AngleMeas components are wrapped to (-π, π], and
// Model.AngleState components of the mean are wrapped after each step.
//
// The Jacobians are the model's FJac and HJac when set. Otherwise they are
// central differences, component i perturbed by h_i = Step*max(1, |x_i|)
// (EKFConfig.Step, default 1e-6), with the differences of angle outputs
// wrapped; this costs 2*Nx calls of F or H per step.
//
// State on a manifold (Model.Manifold): the EKF is then the error-state,
// or multiplicative, EKF of Markley 2003 ("Attitude error representations
// for Kalman filtering", J. Guidance, Control, and Dynamics 26(2)) for a
// unit-quaternion attitude: P is the covariance of the tangent error δ,
// A and C are the model's tangent Jacobians (FJac, HJac, both required),
// the prediction is x = F(x), and the update computes δ = K ν and moves
// the estimate to x ⊞ δ, which resets the error to zero (the reset's
// effect on P, of second order in δ, is neglected as in Markley 2003).
//
// On a linear model the EKF is the Kalman filter. It needs additive noise
// (NewEKF refuses a model with FW or HV). It implements Filter, Innovator
// and Repairer (jitter repair of S as in UKFConfig, off by default).
type EKF struct {
	c linCore
}

// NewEKF returns an extended Kalman filter for m.
func NewEKF(m *Model, cfg EKFConfig) (*EKF, error) {
	m.check()
	checkAngles(m)
	step := cfg.Step
	if step == 0 {
		step = DefaultEKFStep
	}
	if !(step > 0) {
		return nil, errors.New("filters: ekf: Step must be positive")
	}
	if !m.Additive() {
		return nil, errors.New("filters: ekf needs additive noise (the model has FW or HV)")
	}
	if m.Manifold != nil && (m.FJac == nil || m.HJac == nil) {
		return nil, errors.New("filters: ekf on a state manifold needs the model's FJac and HJac (tangent Jacobians)")
	}
	jit, err := newJitter("ekf", cfg.Jitter, cfg.JitterMax)
	if err != nil {
		return nil, err
	}
	f := &EKF{}
	f.c.init(m)
	f.c.jit = jit
	f.c.step = step
	f.c.wrapState = true
	return f, nil
}

// Reset implements Filter. rng is not used.
func (f *EKF) Reset(x0, p0 []float64, rng *rand.Rand) error { return f.c.reset(x0, p0) }

// Predict implements Filter.
func (f *EKF) Predict(k int) error { return f.c.predict(k) }

// Update implements Filter.
func (f *EKF) Update(z []float64, k int) error { return f.c.update(z, k) }

// EstimateTo implements Filter.
func (f *EKF) EstimateTo(x, p []float64) { f.c.estimateTo(x, p) }

// InnovationTo implements Innovator. s may be nil. It reports false after
// Predict until an Update with a measurement succeeds.
func (f *EKF) InnovationTo(nu, s []float64) bool { return f.c.innovationTo(nu, s) }

// Repairs implements Repairer: the jitter repairs since Reset.
func (f *EKF) Repairs() int { return f.c.jit.repairs }
