package datasets

import (
	"fmt"
	"math"

	"github.com/estbench/estbench/filters"
)

// FrictionConfig configures NewFriction. Its zero value gives the defaults.
type FrictionConfig struct {
	Dt          float64 // sampling period in s; if zero, 0.1 is used
	Viscous     float64 // viscous friction coefficient c in 1/s; if zero, 0.2 is used
	Coulomb     float64 // Coulomb friction deceleration a_c in m/s²; if zero, 1 is used
	Drive       float64 // amplitude A of the drive acceleration in m/s²; if zero, 2 is used
	DrivePeriod float64 // period P of the drive in s; if zero, 20 is used
	Q           float64 // spectral density of the random force in m²/s³; if zero, 0.05 is used
	R           float64 // speed measurement noise variance in m²/s²; if zero, 0.01 is used
	Steps       int     // number of steps; if zero, 400 are used
}

func (c FrictionConfig) withDefaults() (FrictionConfig, error) {
	if c.Dt == 0 {
		c.Dt = 0.1
	}
	if c.Viscous == 0 {
		c.Viscous = 0.2
	}
	if c.Coulomb == 0 {
		c.Coulomb = 1
	}
	if c.Drive == 0 {
		c.Drive = 2
	}
	if c.DrivePeriod == 0 {
		c.DrivePeriod = 20
	}
	if c.Q == 0 {
		c.Q = 0.05
	}
	if c.R == 0 {
		c.R = 0.01
	}
	if c.Steps == 0 {
		c.Steps = 400
	}
	for _, v := range []struct {
		name string
		val  float64
	}{{"Dt", c.Dt}, {"Viscous", c.Viscous}, {"Coulomb", c.Coulomb}, {"Drive", c.Drive}, {"DrivePeriod", c.DrivePeriod}, {"Q", c.Q}, {"R", c.R}} {
		if !positive(v.val) {
			return c, fmt.Errorf("datasets: friction: %s must be positive and finite, got %v", v.name, v.val)
		}
	}
	if c.Steps < 1 {
		return c, fmt.Errorf("datasets: friction: Steps must be at least 1, got %d", c.Steps)
	}
	return c, nil
}

// sgn is the sign of v: -1, 0 or 1.
func sgn(v float64) float64 {
	switch {
	case v > 0:
		return 1
	case v < 0:
		return -1
	}
	return 0
}

// frictionStep writes one Euler step of the cart with drive acceleration u.
func frictionStep(dst, x []float64, u, dt, c, ac float64) {
	s, v := x[0], x[1]
	dst[0] = s + dt*v
	dst[1] = v + dt*(u-c*v-ac*sgn(v))
}

// NewFriction returns the problem "friction", a scenario of our own: a
// survey cart on rails, pushed back and forth by a known periodic drive
// and slowed by Coulomb and viscous friction, whose wheel encoder measures
// its speed. State x = [s, v] (m, m/s). With T = cfg.Dt, one explicit Euler
// step of ds/dt = v, dv/dt = u(t) - c v - a_c sgn(v):
//
//	s_k = s + T v
//	v_k = v + T (u_k - c v - a_c sgn(v)),  u_k = A sin(2π k T / P)
//
// plus process noise w_k ~ N(0, Q), Q = q [[T³/3, T²/2], [T²/2, T]] (a
// random force of spectral density q), and z_k = v_k + N(0, R). Coulomb
// friction is the classical dry friction law (a force of constant size
// against the motion); with sgn(0) = 0 the transition jumps by 2 T a_c in
// v at v = 0, where it has no derivative. The drive amplitude A exceeds
// a_c, so the cart stops, sticks (chattering about v = 0, as explicit
// discretisations of dry friction do) and starts again twice per period.
//
// Defaults (our choice): T = 0.1 s, c = 0.2 /s, a_c = 1 m/s², A = 2 m/s²,
// P = 20 s, q = 0.05 m²/s³, R = 0.01 m²/s², 400 steps (two periods), prior
// N([0, 0], diag(1, 0.01)).
//
// Traits: not linear, not differentiable (discontinuous at v = 0), analytic
// Jacobians away from v = 0 (FJac gives the one-sided derivative there, of
// the smooth part), additive Gaussian noise. Scored component: the speed v
// (index 1); the position is not observed and its error grows for every
// filter.
func NewFriction(cfg FrictionConfig) (*Problem, error) {
	c, err := cfg.withDefaults()
	if err != nil {
		return nil, err
	}
	const nx, nz = 2, 1
	t, cv, ac, amp := c.Dt, c.Viscous, c.Coulomb, c.Drive
	om := 2 * math.Pi * t / c.DrivePeriod
	f := func(dst, x []float64, k int) { frictionStep(dst, x, amp*math.Sin(om*float64(k)), t, cv, ac) }
	h := func(dst, x []float64, _ int) { dst[0] = x[1] }
	q := c.Q
	p := &Problem{
		Name: "friction",
		Model: filters.Model{
			Nx: nx, Nz: nz,
			F: f,
			H: h,
			FJac: func(dst, _ []float64, _ int) {
				dst[0], dst[1] = 1, t
				dst[2], dst[3] = 0, 1-t*cv
			},
			HJac: func(dst, _ []float64, _ int) { dst[0], dst[1] = 0, 1 },
			FMany: func(dst, x []float64, k int) {
				u := amp * math.Sin(om*float64(k))
				for i := 0; i+nx <= len(x); i += nx {
					frictionStep(dst[i:i+nx], x[i:i+nx], u, t, cv, ac)
				}
			},
			HMany: manyMeas(nx, nz, h),
			Q:     []float64{q * t * t * t / 3, q * t * t / 2, q * t * t / 2, q * t},
			R:     []float64{c.R},
		},
		X0:     []float64{0, 0},
		P0:     diag(1, 0.01),
		Steps:  c.Steps,
		Dt:     t,
		Scored: []int{1},
		Traits: Traits{
			AnalyticJacobians: true,
			AdditiveNoise:     true,
			GaussianNoise:     true,
			NonDifferentiable: "is discontinuous at v=0",
		},
	}
	return p, nil
}
