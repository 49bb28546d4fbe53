package filters

import (
	"errors"
	"math/rand/v2"
)

// Model is a discrete-time state-space model with additive noise:
//
//	x_k = F(x_{k-1}, k) + w_k,  w_k ~ N(0, Q)
//	z_k = H(x_k, k) + v_k,      v_k ~ N(0, R)
//
// Matrices are row-major. Function fields that are nil fall back as stated.
// Dst never aliases x in any call a filter makes.
type Model struct {
	Nx, Nz int // state and measurement dimensions

	// F writes the noise-free transition of x (the state at k-1) into dst.
	F func(dst, x []float64, k int)
	// H writes the noise-free measurement of x (the state at k) into dst.
	H func(dst, x []float64, k int)

	// FJac writes dF/dx at x (Nx*Nx, row-major) into dst.
	// If nil, filters that need it use central differences of F.
	FJac func(dst, x []float64, k int)
	// HJac writes dH/dx at x (Nz*Nx, row-major) into dst.
	// If nil, central differences of H are used.
	HJac func(dst, x []float64, k int)

	// FMany, if not nil, applies F to n = len(x)/Nx states stored one after
	// another (particle filters use it to avoid a call per particle and to
	// hoist work that depends only on k). If nil, F is called per state.
	FMany func(dst, x []float64, k int)
	// HMany is the same for H: dst holds n*Nz values.
	HMany func(dst, x []float64, k int)

	Q []float64 // process noise covariance, Nx*Nx
	R []float64 // measurement noise covariance, Nz*Nz

	// RAt, if not nil, gives a measurement noise covariance per step: it
	// writes the covariance of step k into dst (the size of R: Nz*Nz, or
	// Nv*Nv with HV) and reports true, or reports false, and R is that of
	// step k (a fix whose receiver states its accuracy, next to one that
	// does not). R stays the reference value where a filter needs one
	// fixed matrix at set-up (its size, the factorization checks of New*
	// and Reset); every Update uses the value of its step. A filter given a
	// model with RAt factors that covariance in each Update (Cholesky, or
	// the semi-definite factor where R may be singular), without
	// allocating; a value that does not factor makes Update return
	// ErrNotPosDef. RAt must not allocate, and must depend on k only and
	// be safe to call from several filters at once (it only reads).
	RAt func(dst []float64, k int) bool

	// Linear reports that F and H are linear maps (F(x) = A x, H(x) = C x),
	// with A and C given by FJac and HJac at any point.
	Linear bool

	// Non-additive noise. If FW is not nil the transition is
	// x_k = FW(x_{k-1}, w_k, k) with w_k ~ N(0, Q) of dimension Nw (Q is then
	// Nw*Nw), and F must equal FW with w = 0. Likewise HV with v_k ~ N(0, R)
	// of dimension Nv. Filters that only support additive noise refuse such
	// models (the runner marks the pair not applicable); filters that
	// support them (augmented sigma-point filters, particle filters) use FW/HV.
	Nw int
	FW func(dst, x, w []float64, k int)
	Nv int
	HV func(dst, x, v []float64, k int)

	// MeasLogLik, if not nil, is the exact log-density log p(z | x) of a
	// measurement whose noise is not Gaussian (up to a constant). Particle
	// filters use it instead of the Gaussian density with R; Gaussian filters
	// keep using R as the moment-matched covariance.
	MeasLogLik func(z, x []float64, k int) float64

	// AngleMeas lists measurement components that are angles in radians:
	// innovations of these components are wrapped to (-pi, pi].
	AngleMeas []int
	// AngleState lists state components that are angles; state residuals of
	// these components are wrapped to (-pi, pi].
	AngleState []int

	// Manifold, if not nil, says the state is not a vector space (a unit
	// quaternion, say) and how to move on it; see Manifold. Filters that
	// support it (ekf, ukf, ckf, ghkf, pf) work on the tangent error; the
	// others refuse such a model.
	Manifold *Manifold
}

// Manifold describes a state that lies on a manifold of dimension Dim,
// stored in Nx numbers (a unit quaternion: Dim 3 stored in 4), by the two
// maps between the manifold and its tangent spaces (the ⊞ and ⊟ of
// Hertzberg, Wagner, Frese & Schröder 2013, "Integrating generic sensor
// fusion algorithms with sound state representations through
// encapsulation of manifolds", Information Fusion 14(1), §3). On a model
// with a Manifold:
//
//   - covariances (the prior, Q, every estimate) are Dim*Dim, of the
//     tangent error δ in x_true = x_est ⊞ δ;
//   - the noise is additive in the tangent: x_k = F(x_{k-1}, k) ⊞ w_k,
//     w_k ~ N(0, Q);
//   - FJac is the Dim*Dim Jacobian of the tangent error,
//     F(x ⊞ δ) ⊟ F(x) ≈ A δ, and HJac the Nz*Dim Jacobian
//     H(x ⊞ δ) − H(x) ≈ C δ;
//   - AngleState must be empty, and FW and HV nil.
type Manifold struct {
	Dim int // tangent dimension, less than or equal to Nx
	// Plus writes x ⊞ d into dst (len Nx) for a tangent vector d (len Dim).
	Plus func(dst, x, d []float64)
	// Minus writes y ⊟ x into dst (len Dim): the tangent vector d with
	// x ⊞ d = y. Minus(x, x) is zero.
	Minus func(dst, y, x []float64)
}

// Nd returns the dimension of the state's covariance: Manifold.Dim on a
// model with a Manifold, Nx otherwise.
func (m *Model) Nd() int {
	if m.Manifold != nil {
		return m.Manifold.Dim
	}
	return m.Nx
}

// Filter is the contract every estimator satisfies. See the package
// documentation for the meaning of each step.
type Filter interface {
	// Reset starts a new run from prior mean x0 and covariance p0 (Nd*Nd,
	// that is Nx*Nx unless the model has a Manifold).
	// The inputs are copied; rng is kept for the run (nil if unused).
	Reset(x0, p0 []float64, rng *rand.Rand) error
	// Predict propagates the estimate to step k.
	Predict(k int) error
	// Update conditions on the measurement z of step k; z == nil skips it.
	Update(z []float64, k int) error
	// EstimateTo copies the mean into x (len Nx) and, if p is not nil, the
	// covariance into p (len Nd*Nd).
	EstimateTo(x, p []float64)
}

// Innovator is implemented by filters that expose the innovation of the
// last Update that had a measurement: nu = z - zhat (angles wrapped) and its
// covariance S (Nz*Nz). It reports false if there was none.
type Innovator interface {
	InnovationTo(nu, s []float64) bool
}

// ESSer is implemented by particle filters: the effective sample size of
// the weights at the last Update, before resampling.
type ESSer interface {
	ESS() float64
}

// Repairer is implemented by Gaussian filters with the optional jitter
// repair of a covariance whose Cholesky factorization failed: the number of
// repaired factorizations since the last Reset.
type Repairer interface {
	Repairs() int
}

// rAt returns the measurement noise covariance of step k: the value
// Model.RAt writes into buf (len(R)) if it reports one, else R.
func (m *Model) rAt(buf []float64, k int) []float64 {
	if m.RAt != nil && m.RAt(buf, k) {
		return buf
	}
	return m.R
}

// fAll writes F of the len(x)/Nx states stored one after another in x
// into dst, by FMany when the model has it, else by F per state.
func (m *Model) fAll(dst, x []float64, k int) {
	if m.FMany != nil {
		m.FMany(dst, x, k)
		return
	}
	nx := m.Nx
	for i := 0; i < len(x)/nx; i++ {
		m.F(dst[i*nx:i*nx+nx], x[i*nx:i*nx+nx], k)
	}
}

// hAll writes H of the len(x)/Nx states in x into dst (Nz values each),
// by HMany when the model has it, else by H per state.
func (m *Model) hAll(dst, x []float64, k int) {
	if m.HMany != nil {
		m.HMany(dst, x, k)
		return
	}
	nx, nz := m.Nx, m.Nz
	for i := 0; i < len(x)/nx; i++ {
		m.H(dst[i*nz:i*nz+nz], x[i*nx:i*nx+nx], k)
	}
}

// Additive reports whether both noises enter additively.
func (m *Model) Additive() bool { return m.FW == nil && m.HV == nil }

// Numerical failures. They are values so a step never allocates to report one.
var (
	ErrNotPosDef   = errors.New("filters: covariance not positive definite")
	ErrNonFinite   = errors.New("filters: estimate not finite")
	ErrWeightsZero = errors.New("filters: all particle weights are zero")
)

func (m *Model) check() {
	if m.Nx <= 0 || m.Nz <= 0 || m.F == nil || m.H == nil {
		panic("filters: model needs Nx, Nz > 0, F and H")
	}
	nw, nv := m.Nx, m.Nz
	if m.FW != nil {
		nw = m.Nw
	}
	if m.HV != nil {
		nv = m.Nv
	}
	if m.Manifold != nil {
		mf := m.Manifold
		if mf.Dim <= 0 || mf.Dim > m.Nx || mf.Plus == nil || mf.Minus == nil {
			panic("filters: model Manifold needs 0 < Dim <= Nx, Plus and Minus")
		}
		if len(m.AngleState) > 0 || !m.Additive() {
			panic("filters: a model with a Manifold has no AngleState, FW or HV")
		}
		nw = mf.Dim
	}
	if len(m.Q) != nw*nw || len(m.R) != nv*nv {
		panic("filters: model Q or R has the wrong size")
	}
}

// ErrManifold is returned by the constructors of filters that do not
// support a state on a manifold (Model.Manifold).
var ErrManifold = errors.New("filters: this filter does not support a state on a manifold (Model.Manifold)")
