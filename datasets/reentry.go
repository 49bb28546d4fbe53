package datasets

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/estbench/estbench/filters"
)

// ReentryConfig configures NewReentry. Its zero value gives the defaults.
type ReentryConfig struct {
	Dt         float64 // measurement interval in s; if zero, 0.1 is used
	Substeps   int     // Runge–Kutta substeps per interval; if zero, 2 are used
	Q          float64 // velocity process noise variance per interval, each axis, in km²/s²; if zero, 2.4064e-5 is used
	Q5         float64 // process noise variance of x5 the filters assume per interval; if zero, 1e-6 is used
	SigmaR     float64 // range noise standard deviation in km; if zero, 1e-3 is used
	SigmaTheta float64 // bearing noise standard deviation in rad; if zero, 17e-3 is used
	Steps      int     // number of measurement steps; if zero, 2000 (200 s) is used
}

func (c ReentryConfig) withDefaults() (ReentryConfig, error) {
	if c.Dt == 0 {
		c.Dt = 0.1
	}
	if c.Substeps == 0 {
		c.Substeps = 2
	}
	if c.Q == 0 {
		c.Q = 2.4064e-5
	}
	if c.Q5 == 0 {
		c.Q5 = 1e-6
	}
	if c.SigmaR == 0 {
		c.SigmaR = 1e-3
	}
	if c.SigmaTheta == 0 {
		c.SigmaTheta = 17e-3
	}
	if c.Steps == 0 {
		c.Steps = 2000
	}
	switch {
	case !positive(c.Dt):
		return c, fmt.Errorf("datasets: reentry: Dt must be a positive finite number of seconds, got %v", c.Dt)
	case c.Substeps < 1:
		return c, fmt.Errorf("datasets: reentry: Substeps must be at least 1, got %d", c.Substeps)
	case !positive(c.Q):
		return c, fmt.Errorf("datasets: reentry: Q must be a positive finite variance, got %v", c.Q)
	case !positive(c.Q5):
		return c, fmt.Errorf("datasets: reentry: Q5 must be a positive finite variance, got %v", c.Q5)
	case !positive(c.SigmaR):
		return c, fmt.Errorf("datasets: reentry: SigmaR must be a positive finite standard deviation, got %v", c.SigmaR)
	case !positive(c.SigmaTheta) || c.SigmaTheta > math.Pi:
		return c, fmt.Errorf("datasets: reentry: SigmaTheta must be a standard deviation in (0, π] rad, got %v", c.SigmaTheta)
	case c.Steps < 1:
		return c, fmt.Errorf("datasets: reentry: Steps must be at least 1, got %d", c.Steps)
	}
	return c, nil
}

// Constants of the re-entry problem (Julier & Uhlmann 2004, §VI, as
// recalled from memory).
const (
	reentryBeta0 = -0.59783 // ballistic coefficient of a typical vehicle, β0
	reentryH0    = 13.406   // scale height of the air density, km
	reentryGm0   = 3.9860e5 // gravitational parameter of the Earth, km³/s²
	reentryR0    = 6374.0   // radius of the Earth, km
	reentryTrue5 = 0.6932   // true x5: the vehicle's β is 2β0 (e^0.6932 ≈ 2)
)

// reentryStart is the published true initial state; the filters' prior
// mean differs only in x5, which they guess as 0 (β = β0).
var reentryStart = [5]float64{6500.4, 349.14, -1.8093, -6.7967, reentryTrue5}

// NewReentry returns the problem "reentry": a vehicle entering the
// atmosphere at high altitude and speed, tracked by a radar on the ground
// that measures range and bearing, with an unknown ballistic coefficient in
// the state. The model is that of Athans, Wishner & Bertolini 1968,
// "Suboptimal state estimation for continuous-time nonlinear systems from
// discrete noisy measurements", IEEE Trans. Automatic Control 13(5), in the
// form and with the numbers used by Julier & Uhlmann 2004, "Unscented
// filtering and nonlinear estimation", Proc. IEEE 92(3), §VI (all recalled
// from memory).
//
// State x = [x1, x2, x3, x4, x5]: position (km) and velocity (km/s) in a
// plane through the Earth's centre, and x5, the logarithm of the ballistic
// coefficient relative to β0. The motion is
//
//	dx1/dt = x3,  dx2/dt = x4,  dx5/dt = 0
//	dx3/dt = D x3 + G x1,  dx4/dt = D x4 + G x2
//	D = β exp((R0 - R)/H0) V,  G = -Gm0/R³,  β = β0 exp(x5)
//	R = √(x1² + x2²),  V = √(x3² + x4²)
//
// with β0 = -0.59783, H0 = 13.406 km, Gm0 = 3.9860e5 km³/s², R0 = 6374 km.
// One step is cfg.Dt = 0.1 s (measurements at 10 Hz), integrated by
// cfg.Substeps = 2 fourth-order Runge–Kutta substeps of 0.05 s (the
// integrator and its step are our choice: we do not recall which scheme the
// source used). Process noise w_k is added to the velocities once per step,
// with covariance diag(0, 0, q, q, 0), q = 2.4064e-5 km²/s² (our reading of
// the source's Q, which we take as a per-step variance). The true x5 has no
// noise; the filters are told Model.Q = diag(0, 0, q, q, q5) with
// q5 = 1e-6, the small noise the source adds so that the filters keep
// adapting x5. The Jacobian is the exact derivative of the integration
// scheme.
//
// The radar at (x_r, y_r) = (R0, 0), on the surface, measures
// z = [√((x1-x_r)² + (x2-y_r)²), atan2(x2-y_r, x1-x_r)] + v with
// v ~ N(0, diag(σ_r², σ_θ²)), σ_r = 1e-3 km (1 m) and σ_θ = 17 mrad (from
// memory). The bearing is component 1 of Model.AngleMeas.
//
// Prior: the true initial state is [6500.4, 349.14, -1.8093, -6.7967,
// 0.6932] plus N(0, diag(1e-6, 1e-6, 1e-6, 1e-6, 0)): the vehicle is
// heavier than typical (β = 2β0). The filters start from the same state but
// with x5 = 0 (the typical vehicle) and P0 = diag(1e-6, 1e-6, 1e-6, 1e-6, 1),
// the wrong guess whose correction the source uses to show the EKF's
// inconsistency. The default run is 200 s (2000 steps).
//
// Traits: not linear, differentiable (except at V = 0 or R = 0, never
// reached), analytic Jacobians, additive Gaussian noise. Scored components:
// the position x1, x2 (indices 0 and 1), in km.
func NewReentry(cfg ReentryConfig) (*Problem, error) {
	c, err := cfg.withDefaults()
	if err != nil {
		return nil, err
	}
	const nx, nz = 5, 2
	fl := newFlow(nx, c.Substeps, c.Dt/float64(c.Substeps), reentryField, denseJMul(nx, reentryFieldJac))
	f := func(dst, x []float64, _ int) { fl.step(dst, x) }
	h := func(dst, x []float64, _ int) { reentryRadar(dst, x) }

	q := c.Q
	trueQ := diag(0, 0, q, q, 0)
	rm := diag(c.SigmaR*c.SigmaR, c.SigmaTheta*c.SigmaTheta)
	sim := newGaussSim(reentryStart[:], diag(1e-6, 1e-6, 1e-6, 1e-6, 0), trueQ, rm, nx, nz)

	p := &Problem{
		Name: "reentry",
		Model: filters.Model{
			Nx: nx, Nz: nz,
			F:         f,
			H:         h,
			FJac:      func(dst, x []float64, _ int) { fl.jac(dst, x) },
			HJac:      func(dst, x []float64, _ int) { reentryRadarJac(dst, x) },
			FMany:     manyStates(nx, f),
			HMany:     manyMeas(nx, nz, h),
			Q:         diag(0, 0, q, q, c.Q5),
			R:         append([]float64(nil), rm...),
			AngleMeas: []int{1},
		},
		X0:     []float64{reentryStart[0], reentryStart[1], reentryStart[2], reentryStart[3], 0},
		P0:     diag(1e-6, 1e-6, 1e-6, 1e-6, 1),
		Steps:  c.Steps,
		Dt:     c.Dt,
		Scored: []int{0, 1},
		Traits: Traits{
			Differentiable:    true,
			AnalyticJacobians: true,
			AdditiveNoise:     true,
			GaussianNoise:     true,
		},
		Simulate: func(p *Problem, seq *Sequence, rng *rand.Rand) { sim.run(p, seq, rng) },
	}
	return p, nil
}

// reentryField writes the vector field of the re-entry dynamics at x.
func reentryField(dst, x []float64) {
	r := math.Hypot(x[0], x[1])
	v := math.Hypot(x[2], x[3])
	d := reentryBeta0 * math.Exp(x[4]) * math.Exp((reentryR0-r)/reentryH0) * v
	g := -reentryGm0 / (r * r * r)
	dst[0] = x[2]
	dst[1] = x[3]
	dst[2] = d*x[2] + g*x[0]
	dst[3] = d*x[3] + g*x[1]
	dst[4] = 0
}

// reentryFieldJac writes the Jacobian of reentryField at x (5×5).
func reentryFieldJac(dst, x []float64) {
	j := dst[:25]
	for i := range j {
		j[i] = 0
	}
	x1, x2, x3, x4 := x[0], x[1], x[2], x[3]
	r := math.Hypot(x1, x2)
	v := math.Hypot(x3, x4)
	be := reentryBeta0 * math.Exp(x[4]) * math.Exp((reentryR0-r)/reentryH0) // β exp((R0-R)/H0)
	d := be * v
	g := -reentryGm0 / (r * r * r)
	// partial derivatives of D and G
	dd1, dd2 := -d*x1/(reentryH0*r), -d*x2/(reentryH0*r)
	var dd3, dd4 float64
	if v > 0 {
		dd3, dd4 = be*x3/v, be*x4/v
	}
	r5 := r * r * r * r * r
	dg1, dg2 := 3*reentryGm0*x1/r5, 3*reentryGm0*x2/r5
	j[2], j[8] = 1, 1
	j[10], j[11], j[12], j[13], j[14] = dd1*x3+g+dg1*x1, dd2*x3+dg2*x1, dd3*x3+d, dd4*x3, d*x3
	j[15], j[16], j[17], j[18], j[19] = dd1*x4+dg1*x2, dd2*x4+g+dg2*x2, dd3*x4, dd4*x4+d, d*x4
}

// reentryRadar writes the range and bearing of x seen from the radar.
func reentryRadar(dst, x []float64) {
	dx, dy := x[0]-reentryR0, x[1]
	dst[0] = math.Hypot(dx, dy)
	dst[1] = wrapPi(math.Atan2(dy, dx)) // atan2(-0, x<0) = -π
}

// reentryRadarJac writes the Jacobian of reentryRadar at x (2×5); zero at
// the radar itself, where it is undefined.
func reentryRadarJac(dst, x []float64) {
	j := dst[:10]
	for i := range j {
		j[i] = 0
	}
	dx, dy := x[0]-reentryR0, x[1]
	r2 := dx*dx + dy*dy
	if r2 == 0 {
		return
	}
	r := math.Sqrt(r2)
	j[0], j[1] = dx/r, dy/r
	j[5], j[6] = -dy/r2, dx/r2
}
