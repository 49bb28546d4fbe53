package filters

import (
	"errors"
	"math/rand/v2"
)

// Sigma-point sets of the UKF (UKFConfig.Points).
const (
	PointsScaled    = "scaled"    // 2n+1 points, Alpha, Beta, Kappa (Julier 2002)
	PointsSymmetric = "symmetric" // 2n+1 points, Kappa (Julier & Uhlmann 1997)
	PointsSimplex   = "simplex"   // n+2 points, W0 (Julier 2003)
)

// UKFConfig holds the parameters of the unscented Kalman filter. The zero
// value gives the defaults: the scaled set with Alpha 1, Beta 2, Kappa 0,
// augmentation only where the model's noise is non-additive, no jitter.
type UKFConfig struct {
	// Points is the sigma-point set: PointsScaled (the default, also for
	// ""), PointsSymmetric or PointsSimplex.
	Points string

	// Alpha, Beta, Kappa are the parameters of the scaled set (Julier 2002,
	// "The scaled unscented transformation"; Wan & van der Merwe 2000, "The
	// unscented Kalman filter for nonlinear estimation"), with
	// λ = Alpha²(n+Kappa) − n for (augmented) state dimension n. If all
	// three are zero the defaults of DefaultUKF (1, 2, 0) are used;
	// otherwise they are taken as given, except that Alpha zero means 1.
	//
	// Alpha (> 0) scales the spread of the sigma points about the mean.
	Alpha float64
	// Beta adds (1 − Alpha² + Beta) to the central point's covariance
	// weight; 2 is the choice for Gaussian distributions (Julier 2002).
	Beta float64
	// Kappa is the secondary scaling parameter; n + Kappa must be
	// positive. The symmetric set uses it too, as the κ of Julier & Uhlmann
	// 1997 (W₀ = κ/(n+κ); their rule for Gaussians is n + κ = 3). Default 0.
	Kappa float64

	// W0 is the weight of the central point of the simplex set, in [0, 1)
	// (Julier 2003, "The spherical simplex unscented transformation").
	// Default 0 (our choice; Julier 2003 leaves it free): the n+1 simplex
	// points then carry equal weights.
	W0 float64

	// Augment, if set, augments the state with both noises even where the
	// model's noise is additive (for comparison and tests). Without it
	// only non-additive noise (Model.FW, Model.HV) is augmented.
	Augment bool

	// Jitter turns on the jitter repair when positive: when the Cholesky
	// factorization of P or S fails, ε·(trace/n + tiny)·I is added for
	// ε = Jitter, 10·Jitter, ... up to JitterMax, and the factorization
	// retried; repairs are counted (Repairs). Default 0: off, and a failed
	// factorization returns ErrNotPosDef.
	Jitter float64
	// JitterMax is the largest ε tried; if zero, DefaultJitterMax (1e-3;
	// common practice, no source).
	JitterMax float64
}

// DefaultUKF returns the default unscented parameters: the scaled set
// (Points "") with Alpha 1, Beta 2, Kappa 0. With these λ = 0: the central point has no
// weight in the mean, weight 2 in the covariance, and the other points lie
// at ±√n standard deviations along the Cholesky columns.
func DefaultUKF() UKFConfig {
	return UKFConfig{Alpha: 1, Beta: 2, Kappa: 0}
}

// resolved returns the parameters NewUKF uses for c.
func (c UKFConfig) resolved() UKFConfig {
	if c.Points == "" {
		c.Points = PointsScaled
	}
	if c.Alpha == 0 && c.Beta == 0 && c.Kappa == 0 {
		c.Alpha, c.Beta = 1, 2
	}
	if c.Alpha == 0 {
		c.Alpha = 1
	}
	return c
}

// maker returns the constructor of c's point set.
func (c UKFConfig) maker() (setMaker, error) {
	switch c.Points {
	case PointsScaled:
		return func(n int) (sigmaSet, error) { return scaledSet(n, c.Alpha, c.Beta, c.Kappa) }, nil
	case PointsSymmetric:
		return func(n int) (sigmaSet, error) { return scaledSet(n, 1, 0, c.Kappa) }, nil
	case PointsSimplex:
		return func(n int) (sigmaSet, error) { return simplexSet(n, c.W0) }, nil
	}
	return nil, errors.New("filters: ukf: Points must be scaled, symmetric or simplex, got " + c.Points)
}

// UKF is the unscented Kalman filter (Julier & Uhlmann 1997, "A new
// extension of the Kalman filter to nonlinear systems"; the algorithm as in
// Wan & van der Merwe 2000, "The unscented Kalman filter for nonlinear
// estimation"). Parameters: UKFConfig — the point set (scaled, default;
// symmetric; simplex), Alpha 1, Beta 2, Kappa 0, W0 0, Augment off,
// Jitter off.
//
// Sigma-point sets: the scaled set (Julier 2002, "The scaled unscented
// transformation": 2n+1 points ±√(n+λ) Lⱼ about the mean, λ = α²(n+κ) − n,
// Wm₀ = λ/(n+λ), Wc₀ = Wm₀ + 1 − α² + β, Wᵢ = 1/(2(n+λ))); the symmetric
// set of Julier & Uhlmann 1997 (the scaled set with α = 1, β = 0: points
// ±√(n+κ) Lⱼ, W₀ = κ/(n+κ)); and the spherical simplex set of Julier 2003
// ("The spherical simplex unscented transformation": n+2 points, W₀ free in
// [0, 1), the other n+1 of weight (1−W₀)/(n+1)). Lⱼ is column j of the
// Cholesky factor of P.
//
// Predict forms the sigma points of N(x, P), passes them through F (FMany
// when set), and takes their weighted mean and covariance plus Q. Update
// forms a fresh set of sigma points from the predicted mean and covariance
// (so that Q is reflected in them), passes them through H (HMany when set),
// and forms the predicted measurement ẑ, S = Σ Wcᵢ dzᵢ dzᵢᵀ + R, the cross
// covariance Pxz = Σ Wcᵢ dxᵢ dzᵢᵀ, the gain K = Pxz S⁻¹ (by Cholesky of S),
// x += K ν, and the covariance in Joseph form,
//
//	P = Σ Wcᵢ (dxᵢ − K dzᵢ)(dxᵢ − K dzᵢ)ᵀ + K R Kᵀ,
//
// which equals P − K S Kᵀ for the optimal K but is a sum of positive
// semi-definite terms when the weights are non-negative (on a linear model
// it is (I−KH) P (I−KH)ᵀ + K R Kᵀ), so it keeps P positive definite where
// the subtraction loses it to rounding. Here dxᵢ = L uᵢ and dzᵢ = Zᵢ − ẑ.
//
// Non-additive noise: when the model has FW (noise as an argument of the
// transition), Predict augments the state with the process noise,
// [x; w] ~ N([x; 0], diag(P, Q)), passes the points of the augmented set
// through FW and adds no Q; likewise with HV Update augments with v and
// adds no R (Wan & van der Merwe 2000, with the state augmented in each
// step by the noise that enters it, since Update redraws its points). The
// augmented sets have the dimension nx+Nw or nx+Nv, which enters λ and the
// weights. Augment forces this form for additive noise too. Q and R of an
// augmented step may be singular (a zero-variance component gets a zero
// column in the square root); Reset returns ErrNotPosDef if one is not
// positive semi-definite.
//
// Angles: for Model.AngleMeas components the predicted measurement is the
// weighted circular mean of the sigma-point measurements and their
// deviations and the innovation are wrapped to (-π, π]; Model.AngleState
// components are treated the same way in the state mean and deviations,
// and wrapped in the estimate.
//
// On a linear-Gaussian model the UKF equals the Kalman filter for any valid
// parameters and set. It returns ErrNotPosDef when P or S has no Cholesky
// factor (after the jitter repair, if on). It implements Filter,
// Innovator and Repairer.
type UKF struct {
	c spCore
}

// NewUKF returns an unscented Kalman filter for m with the parameters cfg
// (see UKFConfig for the zero value). It fails if a parameter is out of
// range (Alpha not positive, n + Kappa not positive, W0 outside [0, 1)).
func NewUKF(m *Model, cfg UKFConfig) (*UKF, error) {
	m.check()
	checkAngles(m)
	c := cfg.resolved()
	mk, err := c.maker()
	if err != nil {
		return nil, err
	}
	jit, err := newJitter("ukf", c.Jitter, c.JitterMax)
	if err != nil {
		return nil, err
	}
	f := &UKF{}
	if err := f.c.init(m, mk, c.Augment, jit); err != nil {
		return nil, errors.New("filters: ukf: " + err.Error())
	}
	return f, nil
}

// Reset implements Filter. rng is not used.
func (f *UKF) Reset(x0, p0 []float64, rng *rand.Rand) error { return f.c.reset(x0, p0) }

// Predict implements Filter.
func (f *UKF) Predict(k int) error { return f.c.predict(k) }

// Update implements Filter.
func (f *UKF) Update(z []float64, k int) error { return f.c.update(z, k) }

// EstimateTo implements Filter.
func (f *UKF) EstimateTo(x, p []float64) { f.c.estimateTo(x, p) }

// InnovationTo implements Innovator. s may be nil. It reports false after
// Predict until an Update with a measurement succeeds.
func (f *UKF) InnovationTo(nu, s []float64) bool { return f.c.innovationTo(nu, s) }

// Repairs implements Repairer: the jitter repairs since Reset.
func (f *UKF) Repairs() int { return f.c.jit.repairs }

// Augmented reports whether Predict and Update augment the state with the
// process and measurement noise.
func (f *UKF) Augmented() (w, v bool) { return f.c.augW, f.c.augV }
