package datasets

import (
	"fmt"
	"math"

	"github.com/estbench/estbench/filters"
)

// CV2DConfig configures NewCV2D. Its zero value gives the defaults.
type CV2DConfig struct {
	Dt    float64 // sampling period T in seconds; if zero, 1 is used
	Q     float64 // acceleration noise variance σ_v² in m²/s⁴; if zero, 1 is used
	R     float64 // position measurement noise variance per axis in m²; if zero, 100 is used
	Steps int     // number of steps; if zero, 100 is used
}

func (c CV2DConfig) withDefaults() (CV2DConfig, error) {
	if c.Dt == 0 {
		c.Dt = 1
	}
	if c.Q == 0 {
		c.Q = 1
	}
	if c.R == 0 {
		c.R = 100
	}
	if c.Steps == 0 {
		c.Steps = 100
	}
	switch {
	case !positive(c.Dt):
		return c, fmt.Errorf("datasets: cv2d: Dt must be a positive finite number of seconds, got %v", c.Dt)
	case !positive(c.Q):
		return c, fmt.Errorf("datasets: cv2d: Q must be a positive finite variance, got %v", c.Q)
	case !positive(c.R):
		return c, fmt.Errorf("datasets: cv2d: R must be a positive finite variance, got %v", c.R)
	case c.Steps < 1:
		return c, fmt.Errorf("datasets: cv2d: Steps must be at least 1, got %d", c.Steps)
	}
	return c, nil
}

// NewCV2D returns the problem "cv2d": a target moving with nearly constant
// velocity in the plane, observed in position. It is the discrete white
// noise acceleration (DWNA) model of Bar-Shalom, Li & Kirubarajan 2001,
// "Estimation with Applications to Tracking and Navigation", §6.3.2, on each
// of two independent axes.
//
// State x = [px, vx, py, vy] (m, m/s). With T = cfg.Dt, per axis
//
//	x_k = A x_{k-1} + Γ v_k,  A = [[1, T], [0, 1]],  Γ = [T²/2, T]ᵀ,
//
// v_k ~ N(0, q) a constant acceleration over the period, so the process
// noise covariance per axis is Q = q Γ Γᵀ = q [[T⁴/4, T³/2], [T³/2, T²]]
// (rank one). The measurement is the position, z_k = [px, py] + w_k with
// w_k ~ N(0, r I).
//
// Defaults (our choice; the source fixes the model, not the numbers): T = 1 s,
// q = 1 m²/s⁴, r = 100 m², 100 steps, prior mean [0, 10, 0, 5] and prior
// covariance diag(100, 25, 100, 25); the true initial state is drawn from the
// prior.
//
// Traits: linear, differentiable, analytic Jacobians, additive Gaussian
// noise. Scored components: the positions px, py (indices 0 and 2).
func NewCV2D(cfg CV2DConfig) (*Problem, error) {
	c, err := cfg.withDefaults()
	if err != nil {
		return nil, err
	}
	t, q, r := c.Dt, c.Q, c.R
	const nx, nz = 4, 2

	a := []float64{
		1, t, 0, 0,
		0, 1, 0, 0,
		0, 0, 1, t,
		0, 0, 0, 1,
	}
	ch := []float64{
		1, 0, 0, 0,
		0, 0, 1, 0,
	}
	q11, q12, q22 := q*t*t*t*t/4, q*t*t*t/2, q*t*t
	qm := []float64{
		q11, q12, 0, 0,
		q12, q22, 0, 0,
		0, 0, q11, q12,
		0, 0, q12, q22,
	}
	rm := []float64{
		r, 0,
		0, r,
	}

	f := func(dst, x []float64, _ int) {
		dst[0] = x[0] + t*x[1]
		dst[1] = x[1]
		dst[2] = x[2] + t*x[3]
		dst[3] = x[3]
	}
	h := func(dst, x []float64, _ int) {
		dst[0] = x[0]
		dst[1] = x[2]
	}
	p := &Problem{
		Name: "cv2d",
		Model: filters.Model{
			Nx: nx, Nz: nz,
			F:    f,
			H:    h,
			FJac: func(dst, _ []float64, _ int) { copy(dst[:nx*nx], a) },
			HJac: func(dst, _ []float64, _ int) { copy(dst[:nz*nx], ch) },
			FMany: func(dst, x []float64, _ int) {
				for i := 0; i+nx <= len(x); i += nx {
					f(dst[i:i+nx], x[i:i+nx], 0)
				}
			},
			HMany: func(dst, x []float64, _ int) {
				for i, j := 0, 0; i+nx <= len(x); i, j = i+nx, j+nz {
					h(dst[j:j+nz], x[i:i+nx], 0)
				}
			},
			Q:      qm,
			R:      rm,
			Linear: true,
		},
		X0:     []float64{0, 10, 0, 5},
		P0:     diag(100, 25, 100, 25),
		Steps:  c.Steps,
		Dt:     t,
		Scored: []int{0, 2},
		Traits: Traits{
			Linear:            true,
			Differentiable:    true,
			AnalyticJacobians: true,
			AdditiveNoise:     true,
			GaussianNoise:     true,
		},
	}
	return p, nil
}

// diag returns a new row-major diagonal matrix.
func diag(d ...float64) []float64 {
	n := len(d)
	m := make([]float64, n*n)
	for i, v := range d {
		m[i*n+i] = v
	}
	return m
}

// positive reports whether v is a positive finite number (false for NaN).
func positive(v float64) bool { return v > 0 && !math.IsInf(v, 1) }
