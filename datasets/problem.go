package datasets

import (
	"math"
	"math/rand/v2"

	"github.com/estbench/estbench/filters"
)

// Sequence is one run of truth and measurements, row k-1 holding step k.
type Sequence struct {
	Nx, Nz, Steps int

	T     []float64 // time of each step in seconds (Steps)
	X0    []float64 // true initial state at step 0 (Nx)
	Truth []float64 // true states, Steps x Nx
	Z     []float64 // measurements, Steps x Nz
	Has   []bool    // Has[k-1] is false when step k has no measurement

	// Prior, if not nil, is this run's prior mean (Nx), used instead of
	// Problem.X0: for problems whose truth is fixed (recorded) and whose
	// runs draw the prior's error instead.
	Prior []float64
}

// Resize sizes the buffers for the given dimensions, reusing capacity.
func (s *Sequence) Resize(nx, nz, steps int) {
	s.Nx, s.Nz, s.Steps = nx, nz, steps
	s.T = grow(s.T, steps)
	s.X0 = grow(s.X0, nx)
	s.Truth = grow(s.Truth, steps*nx)
	s.Z = grow(s.Z, steps*nz)
	if cap(s.Has) < steps {
		s.Has = make([]bool, steps)
	}
	s.Has = s.Has[:steps]
}

// State returns the true state at step k (1-based).
func (s *Sequence) State(k int) []float64 { return s.Truth[(k-1)*s.Nx : k*s.Nx] }

// Meas returns the measurement at step k (1-based), or nil if there is none.
func (s *Sequence) Meas(k int) []float64 {
	if !s.Has[k-1] {
		return nil
	}
	return s.Z[(k-1)*s.Nz : k*s.Nz]
}

func grow(v []float64, n int) []float64 {
	if cap(v) < n {
		return make([]float64, n)
	}
	return v[:n]
}

// Traits are what a problem declares about itself; filters declare what
// they need and the runner matches the two.
type Traits struct {
	Linear            bool // transition and measurement are linear maps
	Differentiable    bool // transition and measurement are differentiable everywhere
	AnalyticJacobians bool // the model provides FJac and HJac
	AdditiveNoise     bool // noise enters additively
	// NonAdditiveMeas says that the measurement noise is the part that is
	// not additive (the model has HV); AdditiveNoise is then false too.
	// Filters that need only additive measurement noise (enkf) read it.
	NonAdditiveMeas bool
	GaussianNoise   bool // process and measurement noise are Gaussian

	// Phrases saying why a trait above does not hold, each completing a
	// sentence that starts with the problem's name ("friction is
	// discontinuous at v=0"). Filters that cannot apply quote them in
	// their reason. Empty when the trait holds or no phrase is given.
	NonDifferentiable string // when Differentiable is false: "is discontinuous at v=0"
	NonAdditive       string // when AdditiveNoise is false: "has multiplicative process noise"
	NonGaussian       string // when GaussianNoise is false: "has Student-t measurement noise"

	// Manifold is set when the state lies on a manifold (Model.Manifold):
	// a phrase such as "has a unit-quaternion attitude state". Filters
	// without manifold support do not apply.
	Manifold string
}

// Problem is a benchmark problem: a model, its prior and a simulator.
type Problem struct {
	Name   string
	Model  filters.Model
	X0, P0 []float64 // prior mean and covariance; the true x0 is drawn from N(X0, P0)
	Steps  int
	Dt     float64 // seconds between steps (1 for problems without physical time)
	Scored []int   // components of the state error scored by RMSE
	Traits Traits

	// NEESComps lists the components of the state error that enter NEES
	// (and its degrees of freedom), nil for all. Components whose truth
	// is unknown (a gyro bias no reference measures) are left out: NEES is
	// then that of the marginal covariance of the others.
	NEESComps []int
	// Eval, if not nil, marks the steps scored by RMSE and NEES: step k
	// with Eval[k-1] false is left out (recorded data that mark the samples
	// meant for evaluation). The filters still run over every step.
	Eval []bool
	// ScoreScale multiplies the scored error before RMSE (0 means 1):
	// 180/π reports an angle in degrees. ScoreUnit names the unit of the
	// result ("deg"); empty when it is the state's own.
	ScoreScale float64
	ScoreUnit  string
	// Replayed says every run replays the same recorded measurements
	// against a fixed truth; the runs differ only in what the run's stream
	// draws (Sequence.Prior). The consistency bounds are then those of one
	// run's values (metrics.Accumulator.Replayed).
	Replayed bool

	// NoTruth says the problem has no ground truth: its measurements are
	// recorded, the same in every run, and Sequence.Truth and X0 hold NaN.
	// The runner then scores no error (RMSE, NEES), only what needs no
	// truth: NIS and the one-step-ahead prediction error.
	NoTruth bool

	// Simulate, if not nil, replaces SimulateAdditive.
	Simulate func(p *Problem, seq *Sequence, rng *rand.Rand)

	// SimulateAdditive's simulator, made on first use
	sim *gaussSim
	// the measurement noise covariance of a step from Model.RAt and its
	// lower factor (simulation only; sized on first use)
	simR, simLR []float64
}

// Run fills seq with one run of the problem drawn from rng.
func (p *Problem) Run(seq *Sequence, rng *rand.Rand) {
	if p.Simulate != nil {
		p.Simulate(p, seq, rng)
		return
	}
	p.SimulateAdditive(seq, rng)
}

// SimulateAdditive simulates the additive-Gaussian model exactly as written:
// x0 ~ N(X0, P0), x_k = F(x_{k-1}, k) + w_k, z_k = H(x_k, k) + v_k, with
// the Model.AngleMeas components of z_k then wrapped to (-π, π] as a sensor
// reports them; v_k ~ N(0, R_k) with the covariance Model.RAt gives for
// step k when the model has one (factored at that step). The Cholesky
// factors of Q, R and P0 are computed on the first call and kept: change
// Model.Q, Model.R or P0 only before it.
// A Problem is not safe for concurrent use by SimulateAdditive; the runner
// gives each worker its own Problem.
func (p *Problem) SimulateAdditive(seq *Sequence, rng *rand.Rand) {
	if p.sim == nil {
		p.sim = newGaussSim(p.X0, p.P0, p.Model.Q, p.Model.R, p.Model.Nx, p.Model.Nz)
	}
	p.sim.x0 = p.X0 // the prior mean as it is now
	p.sim.run(p, seq, rng)
}

// measFactor returns the lower factor of the measurement noise covariance
// of step k for a simulator whose factor of Model.R is lr: lr itself
// unless Model.RAt gives a covariance for the step, which is then factored
// into the problem's workspace (allocated on first use).
func (p *Problem) measFactor(lr []float64, k int) []float64 {
	m := &p.Model
	if m.RAt == nil {
		return lr
	}
	if len(p.simR) != len(m.R) {
		p.simR, p.simLR = make([]float64, len(m.R)), make([]float64, len(m.R))
	}
	if !m.RAt(p.simR, k) {
		return lr
	}
	cholOrZeroTo(p.simLR, p.simR, m.Nz)
	return p.simLR
}

// addGaussian sets dst = mean + L n with n standard normal; dst may alias mean.
func addGaussian(dst, mean, l, w []float64, rng *rand.Rand) {
	n := len(w)
	for i := range w {
		w[i] = rng.NormFloat64()
	}
	for i := 0; i < n; i++ {
		s := mean[i]
		for j := 0; j <= i; j++ {
			s += l[i*n+j] * w[j]
		}
		dst[i] = s
	}
}

// cholOrZero returns the lower Cholesky factor of a symmetric positive
// semi-definite matrix; zero pivots (noise-free components, or components
// fixed by the others as in a rank-one process noise Γ q Γᵀ) give zero
// columns. A pivot is taken as zero when it is at most 1e-12 times its
// diagonal entry, so that rounding in a singular matrix leaves no spurious
// tiny pivot to divide by.
func cholOrZero(a []float64, n int) []float64 {
	l := make([]float64, n*n)
	cholOrZeroTo(l, a, n)
	return l
}

// cholOrZeroTo is cholOrZero into l (n*n), without allocating.
func cholOrZeroTo(l, a []float64, n int) {
	clear(l[:n*n])
	for j := 0; j < n; j++ {
		s := a[j*n+j]
		for k := 0; k < j; k++ {
			s -= l[j*n+k] * l[j*n+k]
		}
		if s <= 1e-12*a[j*n+j] || s <= 1e-300 {
			continue
		}
		d := math.Sqrt(s)
		l[j*n+j] = d
		for i := j + 1; i < n; i++ {
			t := a[i*n+j]
			for k := 0; k < j; k++ {
				t -= l[i*n+k] * l[j*n+k]
			}
			l[i*n+j] = t / d
		}
	}
}

// wrapPi maps an angle in radians to (-π, π].
func wrapPi(a float64) float64 {
	if a > -math.Pi && a <= math.Pi {
		return a
	}
	r := math.Remainder(a, 2*math.Pi)
	if r <= -math.Pi {
		r += 2 * math.Pi
	}
	return r
}
