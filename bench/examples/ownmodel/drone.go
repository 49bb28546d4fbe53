package main

import (
	"fmt"
	"math"

	"github.com/estbench/estbench/bench"
	"github.com/estbench/estbench/datasets"
	"github.com/estbench/estbench/filters"
)

// DroneConfig configures NewDrone. Its zero value gives the defaults.
type DroneConfig struct {
	Steps     int     // number of steps; if zero, 240 are used
	Dt        float64 // sampling period in s; if zero, 0.5 is used
	Climb     float64 // commanded climb rate in m/s until ClimbTime; if zero, 2 is used
	ClimbTime float64 // end of the climb in s; if zero, 60 is used
	Tau       float64 // time constant of the vertical speed in s; if zero, 3 is used
	Q         float64 // vertical acceleration noise variance in m²/s⁴; if zero, 0.05 is used
	SigmaP    float64 // barometer noise standard deviation in Pa; if zero, 12 is used
}

func (c DroneConfig) withDefaults() (DroneConfig, error) {
	def := func(v *float64, d float64) {
		if *v == 0 {
			*v = d
		}
	}
	if c.Steps == 0 {
		c.Steps = 240
	}
	def(&c.Dt, 0.5)
	def(&c.Climb, 2)
	def(&c.ClimbTime, 60)
	def(&c.Tau, 3)
	def(&c.Q, 0.05)
	def(&c.SigmaP, 12)
	for _, v := range []float64{c.Dt, c.ClimbTime, c.Tau, c.Q, c.SigmaP} {
		if !(v > 0) || math.IsInf(v, 1) {
			return c, fmt.Errorf("drone: Dt, ClimbTime, Tau, Q and SigmaP must be positive and finite, got %+v", c)
		}
	}
	if c.Steps < 1 || math.IsNaN(c.Climb) || math.IsInf(c.Climb, 0) {
		return c, fmt.Errorf("drone: Steps must be at least 1 and Climb finite, got %+v", c)
	}
	return c, nil
}

// Constants of the barometric formula below 11 km in the U.S. Standard
// Atmosphere 1976 (NOAA, NASA and USAF, 1976; values from memory): sea
// level pressure and temperature, temperature lapse rate, gravity, molar
// mass of air and the gas constant of the 1976 standard.
const (
	seaLevelPa = 101325.0
	seaLevelK  = 288.15
	lapseKm    = 0.0065
	gravity    = 9.80665
	molarMass  = 0.0289644
	gasR       = 8.31432
)

// baroExponent is g0 M / (R* L), about 5.2559.
const baroExponent = gravity * molarMass / (gasR * lapseKm)

// Pressure is the static pressure in Pa at geopotential altitude h in m
// below 11 km: p0 (1 - L h / T0)^(g0 M / (R* L)).
func Pressure(h float64) float64 {
	return seaLevelPa * math.Pow(1-lapseKm*h/seaLevelK, baroExponent)
}

// dPressure is dp/dh at h.
func dPressure(h float64) float64 {
	return -seaLevelPa * baroExponent * lapseKm / seaLevelK * math.Pow(1-lapseKm*h/seaLevelK, baroExponent-1)
}

// NewDrone returns the problem "drone-baro", a scenario of our own: a
// survey drone takes off, climbs at a commanded rate to its survey altitude
// and hovers there, and its barometer reports the static pressure.
// State x = [h, v] (m, m/s). With T = Dt and the command u = Climb until
// ClimbTime, then 0,
//
//	h_k = h_{k-1} + T v_{k-1}
//	v_k = v_{k-1} + T (u_{k-1} - v_{k-1}) / Tau
//
// plus discrete white noise acceleration q Γ Γᵀ, Γ = [T²/2, T]ᵀ
// (Bar-Shalom, Li & Kirubarajan 2001, "Estimation with Applications to
// Tracking and Navigation", §6.3.2); u_{k-1} is the command at time
// (k-1)T. The measurement is z_k = Pressure(h_k) + w_k, w_k ~ N(0, SigmaP²).
// The prior is h_0 ~ N(0, 4), v_0 ~ N(0, 0.25), on the ground.
//
// Traits: not linear (the pressure), differentiable, analytic Jacobians,
// additive Gaussian noise. Scored component: h.
func NewDrone(cfg DroneConfig) (*datasets.Problem, error) {
	c, err := cfg.withDefaults()
	if err != nil {
		return nil, err
	}
	t := c.Dt
	command := func(k int) float64 {
		if float64(k-1)*t <= c.ClimbTime {
			return c.Climb
		}
		return 0
	}
	q11, q12, q22 := c.Q*t*t*t*t/4, c.Q*t*t*t/2, c.Q*t*t
	return &datasets.Problem{
		Name: "drone-baro",
		Model: filters.Model{
			Nx: 2, Nz: 1,
			F: func(dst, x []float64, k int) {
				dst[0] = x[0] + t*x[1]
				dst[1] = x[1] + t*(command(k)-x[1])/c.Tau
			},
			H: func(dst, x []float64, _ int) { dst[0] = Pressure(x[0]) },
			FJac: func(dst, _ []float64, _ int) {
				dst[0], dst[1] = 1, t
				dst[2], dst[3] = 0, 1-t/c.Tau
			},
			HJac: func(dst, x []float64, _ int) { dst[0], dst[1] = dPressure(x[0]), 0 },
			Q:    []float64{q11, q12, q12, q22},
			R:    []float64{c.SigmaP * c.SigmaP},
		},
		X0:     []float64{0, 0},
		P0:     []float64{4, 0, 0, 0.25},
		Steps:  c.Steps,
		Dt:     t,
		Scored: []int{0},
		Traits: datasets.Traits{
			Differentiable:    true,
			AnalyticJacobians: true,
			AdditiveNoise:     true,
			GaussianNoise:     true,
		},
	}, nil
}

// DroneSpec is the catalogue entry of the drone problem: its parameters,
// with defaults and ranges, and how to build it from a suite's values.
func DroneSpec() bench.ProblemSpec {
	return bench.ProblemSpec{
		Name:    "drone-baro",
		Summary: "survey drone climbing to altitude, static pressure from a barometer (our scenario)",
		Source:  "our scenario; barometric formula of the U.S. Standard Atmosphere 1976 (constants from memory)",
		Params: []bench.Param{
			{Name: "steps", Kind: bench.Int, Default: bench.Value{Num: 240}, Doc: "number of time steps", Min: 1, Max: 1e6},
			{Name: "dt", Kind: bench.Float, Default: bench.Value{Num: 0.5}, Doc: "sampling period in s", Min: 1e-3, Max: 10},
			{Name: "climb", Kind: bench.Float, Default: bench.Value{Num: 2}, Doc: "commanded climb rate in m/s", Min: 0.01, Max: 20},
			{Name: "sigma_p", Kind: bench.Float, Default: bench.Value{Num: 12}, Doc: "barometer noise standard deviation in Pa", Min: 0.01, Max: 1000},
		},
		Build: func(v bench.Values) (*datasets.Problem, error) {
			return NewDrone(DroneConfig{Steps: v.Int("steps"), Dt: v.Float("dt"), Climb: v.Float("climb"), SigmaP: v.Float("sigma_p")})
		},
	}
}
