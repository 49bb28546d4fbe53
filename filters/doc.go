// Package filters holds the state estimators of estbench behind one small
// contract, Filter, and the Model type they run on.
//
// # Contract
//
// A filter is built once from a Model and a config (New*), then Reset with a
// prior mean, prior covariance and random stream for each run. Predict(k)
// propagates the estimate from step k-1 to step k; Update(z, k) conditions on
// the measurement z of step k, and a nil z means "no measurement" (the
// estimate stays the prediction). EstimateTo copies the current mean and
// covariance into caller-provided destinations. The measurement noise
// covariance of Update(z, k) is Model.R, or the value Model.RAt gives for
// step k when the model has one: every filter here honours it.
//
// # States on a manifold
//
// A model whose state is not a vector space (a unit quaternion) sets
// Model.Manifold: the maps x ⊞ δ and y ⊟ x and the dimension Nd of δ. The
// covariances (prior, Q, EstimateTo's) are then Nd*Nd, of δ, and the
// Jacobians are tangent Jacobians. ekf runs as the multiplicative EKF; ukf,
// ckf and ghkf draw sigma points in δ and average on the manifold; pf
// draws its noise in δ and adds it by ⊞, and averages its particles on the
// manifold; the other filters return ErrManifold from their constructors.
//
// # Memory
//
// All workspace is sized in New*. Reset, Predict, Update and EstimateTo
// allocate nothing. Matrices are dense row-major []float64 of fixed small
// size; the linear algebra in linalg.go is written for that case, without the
// per-call overhead of a general-purpose library.
//
// # Errors
//
// A caller error (wrong dimensions) panics with a "filters:" message. A
// numerical failure (a covariance that is not positive definite, a
// degenerate weight set) is returned as one of the sentinel errors below,
// which allocate nothing; the runner records it as a divergence.
//
// # Covariance numerics
//
// The Gaussian filters keep covariances exactly symmetric and update them
// in forms that stay positive semi-definite under rounding: the Joseph
// form (I−KC) P (I−KC)ᵀ + K R Kᵀ as written (kf, ekf, iekf), its
// sigma-point counterpart Σ Wcᵢ (dxᵢ − K dzᵢ)(dxᵢ − K dzᵢ)ᵀ + K R Kᵀ (ukf,
// ckf, ghkf), or a propagated Cholesky factor (srukf). A Cholesky
// factorization that fails returns ErrNotPosDef, unless the config's
// Jitter turns on the repair (a growing multiple of the mean variance
// added to the diagonal); repairs since Reset are counted by the
// one-method interface Repairer.
//
// # Time and indexing
//
// Step k runs from 1 to K. The prior describes the state at step 0. The
// model's transition F(dst, x, k) maps the state at k-1 to the state at k.
//
// # Randomness
//
// Filters that sample (pf, apf, rpf, enkf) draw only from the *rand.Rand passed to Reset;
// there is no global random state. The same stream gives the same result.
//
// This package imports only gonum and the standard library.
package filters
