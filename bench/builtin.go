package bench

import (
	_ "embed"
	"math"

	"github.com/estbench/estbench/datasets"
	"github.com/estbench/estbench/filters"
)

// DefaultSuite is the built-in default suite run when no --suite is given.
//
//go:embed suites/default.toml
var DefaultSuite []byte

// Builtin returns the one explicit list of built-in problems and filters.
// Each call returns a fresh catalogue; a program with its own models
// appends to it.
func Builtin() *Catalogue {
	return &Catalogue{
		Problems: []ProblemSpec{
			{
				Name:    "cv2d",
				Summary: "2-D constant velocity, discrete white-noise acceleration, position measurements",
				Source:  "Bar-Shalom, Li & Kirubarajan 2001, Estimation with Applications to Tracking and Navigation, §6.3.2",
				Params: []Param{
					steps(100),
					{Name: "dt", Kind: Float, Default: Value{Num: 1}, Doc: "sampling period in s", Min: 1e-9, Max: 1e9},
					{Name: "q", Kind: Float, Default: Value{Num: 1}, Doc: "acceleration noise variance in m²/s⁴", Min: 1e-12, Max: 1e12},
					{Name: "r", Kind: Float, Default: Value{Num: 100}, Doc: "position noise variance per axis in m²", Min: 1e-12, Max: 1e12},
				},
				Build: func(v Values) (*datasets.Problem, error) {
					return datasets.NewCV2D(datasets.CV2DConfig{Steps: v.Int("steps"), Dt: v.Float("dt"), Q: v.Float("q"), R: v.Float("r")})
				},
			},
			{
				Name:    "ungm",
				Summary: "univariate nonstationary growth model, x²/20 measurement",
				Source:  "Gordon, Salmond & Smith 1993, IEE Proc. F 140(2); Kitagawa 1996, J. Comput. Graph. Stat. 5(1)",
				Params: []Param{
					steps(100),
					{Name: "q", Kind: Float, Default: Value{Num: 10}, Doc: "process noise variance", Min: 1e-12, Max: 1e12},
					{Name: "r", Kind: Float, Default: Value{Num: 1}, Doc: "measurement noise variance", Min: 1e-12, Max: 1e12},
					{Name: "p0", Kind: Float, Default: Value{Num: 5}, Doc: "prior variance of x0 (prior mean 0)", Min: 1e-12, Max: 1e12},
				},
				Build: func(v Values) (*datasets.Problem, error) {
					return datasets.NewUNGM(datasets.UNGMConfig{Steps: v.Int("steps"), Q: v.Float("q"), R: v.Float("r"), P0: v.Float("p0")})
				},
			},
			{
				Name:    "ctrb",
				Summary: "nearly-coordinated turn with unknown turn rate (5 states), range and bearing from the origin",
				Source:  "Bar-Shalom, Li & Kirubarajan 2001, §11.7; set-up of Arasaratnam & Haykin 2009, IEEE TAC 54(6), §VI",
				Params: []Param{
					steps(100),
					{Name: "dt", Kind: Float, Default: Value{Num: 1}, Doc: "sampling period in s", Min: 1e-9, Max: 1e9},
					{Name: "q1", Kind: Float, Default: Value{Num: 0.1}, Doc: "position/velocity noise intensity in m²/s³", Min: 1e-12, Max: 1e12},
					{Name: "q2", Kind: Float, Default: Value{Num: 1.75e-4}, Doc: "turn-rate noise intensity in rad²/s³", Min: 1e-15, Max: 1e6},
					{Name: "sigma_r", Kind: Float, Default: Value{Num: 10}, Doc: "range noise standard deviation in m", Min: 1e-9, Max: 1e9},
					{Name: "sigma_theta", Kind: Float, Default: Value{Num: math.Sqrt(10) * 1e-3}, Doc: "bearing noise standard deviation in rad", Min: 1e-12, Max: 1},
				},
				Build: func(v Values) (*datasets.Problem, error) {
					return datasets.NewCTRB(datasets.CTRBConfig{Steps: v.Int("steps"), Dt: v.Float("dt"), Q1: v.Float("q1"), Q2: v.Float("q2"),
						SigmaR: v.Float("sigma_r"), SigmaTheta: v.Float("sigma_theta")})
				},
			},
		},
		Filters: []FilterSpec{
			{
				Name:    "kf",
				Summary: "linear Kalman filter, Joseph-form covariance update",
				Source:  "Kalman 1960, J. Basic Eng. 82(1); Joseph form: Bar-Shalom et al. 2001, §5.2",
				Traits:  "needs a linear model",
				Applies: func(t datasets.Traits) (bool, string) {
					if !t.Linear {
						return false, "needs a linear model; {problem} is nonlinear"
					}
					return true, ""
				},
				New: func(m *filters.Model, v Values) (filters.Filter, error) {
					return filters.NewKF(m, filters.KFConfig{})
				},
			},
			{
				Name:    "ekf",
				Summary: "extended Kalman filter; analytic Jacobians when the model has them, else central differences",
				Source:  "Jazwinski 1970, Stochastic Processes and Filtering Theory; Bar-Shalom et al. 2001, §10.3",
				Traits:  "needs a differentiable model",
				Params: []Param{
					{Name: "diff_step", Kind: Float, Default: Value{Num: 1e-6}, Doc: "relative central-difference step when the model has no Jacobian", Min: 1e-12, Max: 1},
				},
				Applies: func(t datasets.Traits) (bool, string) {
					if !t.Differentiable {
						return false, "needs a differentiable model; {problem} is not differentiable"
					}
					return true, ""
				},
				New: func(m *filters.Model, v Values) (filters.Filter, error) {
					return filters.NewEKF(m, filters.EKFConfig{Step: v.Float("diff_step")})
				},
			},
			{
				Name:    "ukf",
				Summary: "unscented Kalman filter, scaled sigma points, additive noise",
				Source:  "Julier 2002, Proc. American Control Conf.; Wan & van der Merwe 2000, Proc. IEEE AS-SPCC",
				Traits:  "any model with additive noise",
				Params: []Param{
					{Name: "alpha", Kind: Float, Default: Value{Num: 1}, Doc: "spread of the sigma points", Min: 1e-6, Max: 10},
					{Name: "beta", Kind: Float, Default: Value{Num: 2}, Doc: "prior knowledge of the distribution (2 for Gaussian)", Min: -1e3, Max: 1e3},
					{Name: "kappa", Kind: Float, Default: Value{Num: 0}, Doc: "secondary scaling", Min: -1e3, Max: 1e3},
				},
				Applies: additiveOnly,
				New: func(m *filters.Model, v Values) (filters.Filter, error) {
					return filters.NewUKF(m, filters.UKFConfig{Alpha: v.Float("alpha"), Beta: v.Float("beta"), Kappa: v.Float("kappa")})
				},
			},
			{
				Name:    "pf",
				Summary: "bootstrap particle filter, log-weights, systematic resampling on an ESS threshold",
				Source:  "Gordon, Salmond & Smith 1993, IEE Proc. F 140(2); systematic resampling: Kitagawa 1996",
				Traits:  "any model it can simulate",
				Params: []Param{
					{Name: "particles", Kind: Int, Default: Value{Num: 1000}, Doc: "number of particles N", Min: 1, Max: 1e8},
					{Name: "resample_ess", Kind: Float, Default: Value{Num: 1}, Doc: "resample when ESS < resample_ess × N (1 = every step)", Min: 1e-9, Max: 1},
				},
				Applies: func(datasets.Traits) (bool, string) { return true, "" },
				New: func(m *filters.Model, v Values) (filters.Filter, error) {
					return filters.NewPF(m, filters.PFConfig{Particles: v.Int("particles"), ResampleThreshold: v.Float("resample_ess")})
				},
			},
		},
	}
}

func steps(def int) Param {
	return Param{Name: "steps", Kind: Int, Default: Value{Num: float64(def)}, Doc: "number of time steps", Min: 1, Max: 1e7}
}

func additiveOnly(t datasets.Traits) (bool, string) {
	if !t.AdditiveNoise {
		return false, "needs additive noise; {problem} has non-additive noise"
	}
	return true, ""
}
