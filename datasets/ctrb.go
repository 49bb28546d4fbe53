package datasets

import (
	"fmt"
	"math"

	"github.com/estbench/estbench/filters"
)

// CTRBConfig configures NewCTRB. Its zero value gives the defaults.
type CTRBConfig struct {
	Dt         float64 // sampling period T in seconds; if zero, 1 is used
	Q1         float64 // position/velocity noise intensity q1 in m²/s³; if zero, 0.1 is used
	Q2         float64 // turn-rate noise intensity q2 in rad²/s³; if zero, 1.75e-4 is used
	SigmaR     float64 // range noise standard deviation in m; if zero, 10 is used
	SigmaTheta float64 // bearing noise standard deviation in rad; if zero, √10e-3 (√10 mrad) is used
	Steps      int     // number of steps; if zero, 100 is used
}

func (c CTRBConfig) withDefaults() (CTRBConfig, error) {
	if c.Dt == 0 {
		c.Dt = 1
	}
	if c.Q1 == 0 {
		c.Q1 = 0.1
	}
	if c.Q2 == 0 {
		c.Q2 = 1.75e-4
	}
	if c.SigmaR == 0 {
		c.SigmaR = 10
	}
	if c.SigmaTheta == 0 {
		c.SigmaTheta = math.Sqrt(10) * 1e-3
	}
	if c.Steps == 0 {
		c.Steps = 100
	}
	switch {
	case !positive(c.Dt):
		return c, fmt.Errorf("datasets: ctrb: Dt must be a positive finite number of seconds, got %v", c.Dt)
	case !positive(c.Q1):
		return c, fmt.Errorf("datasets: ctrb: Q1 must be a positive finite noise intensity, got %v", c.Q1)
	case !positive(c.Q2):
		return c, fmt.Errorf("datasets: ctrb: Q2 must be a positive finite noise intensity, got %v", c.Q2)
	case !positive(c.SigmaR):
		return c, fmt.Errorf("datasets: ctrb: SigmaR must be a positive finite standard deviation, got %v", c.SigmaR)
	case !positive(c.SigmaTheta) || c.SigmaTheta > math.Pi:
		return c, fmt.Errorf("datasets: ctrb: SigmaTheta must be a standard deviation in (0, π] rad, got %v", c.SigmaTheta)
	case c.Steps < 1:
		return c, fmt.Errorf("datasets: ctrb: Steps must be at least 1, got %d", c.Steps)
	}
	return c, nil
}

// NewCTRB returns the problem "ctrb": a target in a nearly coordinated turn
// with unknown turn rate, tracked by a sensor at the origin that measures
// range and bearing. The motion is the coordinated turn model with the turn
// rate in the state (Bar-Shalom, Li & Kirubarajan 2001, "Estimation with
// Applications to Tracking and Navigation", §11.7); the scenario is the
// example of Arasaratnam & Haykin 2009, "Cubature Kalman Filters", IEEE
// Trans. Automatic Control 54(6), §VI.
//
// State x = [px, vx, py, vy, ω] (m, m/s, m, m/s, rad/s). With T = cfg.Dt,
// θ = ωT, s = sin θ, c = cos θ, a = s/ω and b = (1 - c)/ω:
//
//	px_k = px + a vx - b vy       vx_k = c vx - s vy
//	py_k = py + b vx + a vy       vy_k = s vx + c vy
//	ω_k  = ω
//
// plus process noise w_k ~ N(0, Q), Q = blockdiag(q1 M, q1 M, q2 T) with
// M = [[T³/3, T²/2], [T²/2, T]]. As ω → 0, a → T and b → 0 (straight-line
// constant velocity). For |θ| < 0.1, a, b and their derivatives in ω are
// evaluated by their Taylor series to the θ⁸ term relative to the leading
// one (the next term is below 5e-18 relative), elsewhere in closed form with 1 - c written as
// 2 sin²(θ/2); both agree to rounding at the switch, so F and its Jacobian
// are continuous, and ω = 0 needs no special case.
//
// The measurement is z_k = [√(px² + py²), atan2(py, px)] + v_k with
// v_k ~ N(0, diag(σ_r², σ_θ²)). The bearing (component 1, listed in
// Model.AngleMeas) is given in (-π, π]; simulated bearings are wrapped into
// that interval after the noise is added. At the sensor itself (px = py = 0)
// the measurement Jacobian, undefined there, is taken as zero.
//
// Defaults, from Arasaratnam & Haykin 2009 §VI as recalled from memory:
// T = 1 s, q1 = 0.1 m²/s³, q2 = 1.75e-4 rad²/s³, σ_r = 10 m,
// σ_θ = √10 mrad, 100 steps, initial state [1000 m, 300 m/s, 1000 m, 0 m/s,
// -3°/s] and P0 = diag(100 m², 10 m²/s², 100 m², 10 m²/s², 100e-6 rad²/s²).
// There the true initial state is fixed and the filters' initial mean is
// drawn from N(x0, P0); here, as for every problem, the true initial state
// is drawn from N(X0, P0) and the filters start at X0, which gives the
// same distribution of the initial error.
//
// Traits: not linear, differentiable (except at the sensor), analytic
// Jacobians, additive Gaussian noise. Scored components: the positions px, py
// (indices 0 and 2).
func NewCTRB(cfg CTRBConfig) (*Problem, error) {
	c, err := cfg.withDefaults()
	if err != nil {
		return nil, err
	}
	t := c.Dt
	const nx, nz = 5, 2

	q1, q2 := c.Q1, c.Q2
	m11, m12, m22 := q1*t*t*t/3, q1*t*t/2, q1*t
	qm := []float64{
		m11, m12, 0, 0, 0,
		m12, m22, 0, 0, 0,
		0, 0, m11, m12, 0,
		0, 0, m12, m22, 0,
		0, 0, 0, 0, q2 * t,
	}
	rm := []float64{
		c.SigmaR * c.SigmaR, 0,
		0, c.SigmaTheta * c.SigmaTheta,
	}

	f := func(dst, x []float64, _ int) { ctMove(dst, x, t) }
	h := func(dst, x []float64, _ int) { rangeBearing(dst, x) }
	p := &Problem{
		Name: "ctrb",
		Model: filters.Model{
			Nx: nx, Nz: nz,
			F:    f,
			H:    h,
			FJac: func(dst, x []float64, _ int) { ctJac(dst, x, t) },
			HJac: func(dst, x []float64, _ int) { rangeBearingJac(dst, x) },
			FMany: func(dst, x []float64, _ int) {
				for i := 0; i+nx <= len(x); i += nx {
					ctMove(dst[i:i+nx], x[i:i+nx], t)
				}
			},
			HMany: func(dst, x []float64, _ int) {
				for i, j := 0, 0; i+nx <= len(x); i, j = i+nx, j+nz {
					rangeBearing(dst[j:j+nz], x[i:i+nx])
				}
			},
			Q:         qm,
			R:         rm,
			AngleMeas: []int{1},
		},
		X0:     []float64{1000, 300, 1000, 0, -3 * math.Pi / 180},
		P0:     diag(100, 10, 100, 10, 100e-6),
		Steps:  c.Steps,
		Dt:     t,
		Scored: []int{0, 2},
		Traits: Traits{
			Differentiable:    true,
			AnalyticJacobians: true,
			AdditiveNoise:     true,
			GaussianNoise:     true,
		},
	}
	return p, nil
}

// ctSeries is the |ωT| below which the turn coefficients use their series.
const ctSeries = 0.1

// ctCoef returns, for turn rate w and period t, s = sin(wt), c = cos(wt),
// a = s/w and b = (1-c)/w, continuous through w = 0 (a = t, b = 0).
func ctCoef(w, t float64) (s, c, a, b float64) {
	th := w * t
	s, c = math.Sincos(th)
	if math.Abs(th) < ctSeries {
		u := th * th
		a = t * (1 - u/6*(1-u/20*(1-u/42*(1-u/72))))
		b = t * th / 2 * (1 - u/12*(1-u/30*(1-u/56*(1-u/90))))
		return s, c, a, b
	}
	hs := math.Sin(th / 2)
	return s, c, s / w, 2 * hs * hs / w
}

// ctCoefDeriv returns da/dw and db/dw for the coefficients of ctCoef.
func ctCoefDeriv(w, t, s, c float64) (da, db float64) {
	th := w * t
	if math.Abs(th) < ctSeries {
		u := th * th
		da = -t * t * th / 3 * (1 - u/10*(1-u/28*(1-u/54*(1-u/88))))
		db = t * t / 2 * (1 - u/4*(1-u/18*(1-u/40*(1-u/70))))
		return da, db
	}
	hs := math.Sin(th / 2)
	w2 := w * w
	return (th*c - s) / w2, (th*s - 2*hs*hs) / w2
}

// ctMove writes the coordinated-turn transition of x over period t into dst.
func ctMove(dst, x []float64, t float64) {
	px, vx, py, vy, w := x[0], x[1], x[2], x[3], x[4]
	s, c, a, b := ctCoef(w, t)
	dst[0] = px + a*vx - b*vy
	dst[1] = c*vx - s*vy
	dst[2] = py + b*vx + a*vy
	dst[3] = s*vx + c*vy
	dst[4] = w
}

// ctJac writes the Jacobian of ctMove at x (5x5, row-major) into dst.
func ctJac(dst, x []float64, t float64) {
	vx, vy, w := x[1], x[3], x[4]
	s, c, a, b := ctCoef(w, t)
	da, db := ctCoefDeriv(w, t, s, c)
	j := dst[:25]
	for i := range j {
		j[i] = 0
	}
	j[0], j[1], j[3], j[4] = 1, a, -b, da*vx-db*vy
	j[6], j[8], j[9] = c, -s, -t*(s*vx+c*vy)
	j[11], j[12], j[13], j[14] = b, 1, a, db*vx+da*vy
	j[16], j[18], j[19] = s, c, t*(c*vx-s*vy)
	j[24] = 1
}

// rangeBearing writes the range and bearing of x seen from the origin into
// dst, the bearing in (-π, π].
func rangeBearing(dst, x []float64) {
	px, py := x[0], x[2]
	dst[0] = math.Sqrt(px*px + py*py)
	th := math.Atan2(py, px)
	if th <= -math.Pi { // atan2(-0, x<0) = -π
		th += 2 * math.Pi
	}
	dst[1] = th
}

// rangeBearingJac writes the Jacobian of rangeBearing at x (2x5) into dst;
// zero at the origin, where it is undefined.
func rangeBearingJac(dst, x []float64) {
	px, py := x[0], x[2]
	j := dst[:10]
	for i := range j {
		j[i] = 0
	}
	r2 := px*px + py*py
	if r2 == 0 {
		return
	}
	r := math.Sqrt(r2)
	j[0], j[2] = px/r, py/r
	j[5], j[7] = -py/r2, px/r2
}
