package datasets

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/estbench/estbench/filters"
)

// BearingsConfig configures NewBearings. Its zero value gives the defaults.
type BearingsConfig struct {
	SigmaQ     float64 // standard deviation of the acceleration noise per axis; if zero, 0.001 is used
	SigmaTheta float64 // bearing noise standard deviation in rad; if zero, 0.005 is used
	Steps      int     // number of steps; if zero, 24 are used
	// DrawStart draws the true initial state from the prior N(X0, P0)
	// instead of starting every run at the published true state.
	DrawStart bool
}

func (c BearingsConfig) withDefaults() (BearingsConfig, error) {
	if c.SigmaQ == 0 {
		c.SigmaQ = 0.001
	}
	if c.SigmaTheta == 0 {
		c.SigmaTheta = 0.005
	}
	if c.Steps == 0 {
		c.Steps = 24
	}
	switch {
	case !positive(c.SigmaQ):
		return c, fmt.Errorf("datasets: bearings: SigmaQ must be a positive finite standard deviation, got %v", c.SigmaQ)
	case !positive(c.SigmaTheta) || c.SigmaTheta > math.Pi:
		return c, fmt.Errorf("datasets: bearings: SigmaTheta must be a standard deviation in (0, π] rad, got %v", c.SigmaTheta)
	case c.Steps < 1:
		return c, fmt.Errorf("datasets: bearings: Steps must be at least 1, got %d", c.Steps)
	}
	return c, nil
}

// bearingsStart is the published true initial state of Gordon et al. 1993.
var bearingsStart = [4]float64{-0.05, 0.001, 0.7, -0.055}

// NewBearings returns the problem "bearings": bearings-only tracking of a
// target moving with nearly constant velocity in the plane, seen from a
// fixed observer at the origin. It is the example of Gordon, Salmond &
// Smith 1993, "Novel approach to nonlinear/non-Gaussian Bayesian state
// estimation", IEE Proceedings F 140(2), §4 (numbers recalled from memory).
//
// State x = [x, ẋ, y, ẏ] (arbitrary units of length, one step of time).
// Per axis, x_k = A x_{k-1} + Γ w_k with A = [[1, 1], [0, 1]],
// Γ = [1/2, 1]ᵀ and w_k ~ N(0, σ_q²), σ_q = 0.001, so Q = σ_q² Γ Γᵀ per
// axis (rank one). The measurement is the bearing
// z_k = atan2(y_k, x_k) + v_k, v_k ~ N(0, σ_θ²), σ_θ = 0.005 rad, in
// (-π, π] (Model.AngleMeas); the source writes tan⁻¹(y/x), and atan2
// resolves its quadrant.
//
// Prior (Gordon et al. 1993): mean [0, 0, 0.4, -0.05] and covariance
// diag(0.5², 0.005², 0.3², 0.01²); the true initial state is the fixed
// [-0.05, 0.001, 0.7, -0.055], which the target leaves on a course passing
// close to the observer, where the bearing changes fastest. With
// cfg.DrawStart the true initial state is drawn from the prior instead, as
// for most problems here. 24 steps.
//
// Traits: not linear, differentiable (except at the observer), analytic
// Jacobians, additive Gaussian noise. Scored components: the position x, y
// (indices 0 and 2).
func NewBearings(cfg BearingsConfig) (*Problem, error) {
	c, err := cfg.withDefaults()
	if err != nil {
		return nil, err
	}
	const nx, nz = 4, 1
	q := c.SigmaQ * c.SigmaQ
	qm := []float64{
		q / 4, q / 2, 0, 0,
		q / 2, q, 0, 0,
		0, 0, q / 4, q / 2,
		0, 0, q / 2, q,
	}
	a := []float64{
		1, 1, 0, 0,
		0, 1, 0, 0,
		0, 0, 1, 1,
		0, 0, 0, 1,
	}
	f := func(dst, x []float64, _ int) {
		dst[0] = x[0] + x[1]
		dst[1] = x[1]
		dst[2] = x[2] + x[3]
		dst[3] = x[3]
	}
	h := func(dst, x []float64, _ int) { dst[0] = wrapPi(math.Atan2(x[2], x[0])) }
	rm := []float64{c.SigmaTheta * c.SigmaTheta}
	p := &Problem{
		Name: "bearings",
		Model: filters.Model{
			Nx: nx, Nz: nz,
			F:    f,
			H:    h,
			FJac: func(dst, _ []float64, _ int) { copy(dst[:nx*nx], a) },
			HJac: func(dst, x []float64, _ int) {
				px, py := x[0], x[2]
				r2 := px*px + py*py
				dst[0], dst[1], dst[2], dst[3] = 0, 0, 0, 0
				if r2 > 0 {
					dst[0], dst[2] = -py/r2, px/r2
				}
			},
			FMany:     manyStates(nx, f),
			HMany:     manyMeas(nx, nz, h),
			Q:         qm,
			R:         rm,
			AngleMeas: []int{0},
		},
		X0:     []float64{0, 0, 0.4, -0.05},
		P0:     diag(0.5*0.5, 0.005*0.005, 0.3*0.3, 0.01*0.01),
		Steps:  c.Steps,
		Dt:     1,
		Scored: []int{0, 2},
		Traits: Traits{
			Differentiable:    true,
			AnalyticJacobians: true,
			AdditiveNoise:     true,
			GaussianNoise:     true,
		},
	}
	if !c.DrawStart {
		sim := newGaussSim(bearingsStart[:], nil, qm, rm, nx, nz)
		p.Simulate = func(p *Problem, seq *Sequence, rng *rand.Rand) { sim.run(p, seq, rng) }
	}
	return p, nil
}
