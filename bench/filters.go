package bench

import (
	"github.com/estbench/estbench/datasets"
	"github.com/estbench/estbench/filters"
)

// builtinFilters is the one explicit list of built-in filters. A new filter
// is one file in filters/ plus one entry here.
func builtinFilters() []FilterSpec {
	return []FilterSpec{
		{
			Name:    "kf",
			Summary: "linear Kalman filter, Joseph-form covariance update",
			Source:  "Kalman 1960, J. Basic Eng. 82(1); Joseph form: Bar-Shalom et al. 2001, §5.2",
			Traits:  "needs a linear model with additive noise",
			Params:  jitterParams(),
			Applies: func(t datasets.Traits) (bool, string) {
				if !t.Linear {
					return false, "needs a linear model; {problem} is nonlinear"
				}
				return additiveOnly(t)
			},
			New: func(m *filters.Model, v Values) (filters.Filter, error) {
				return filters.NewKF(m, filters.KFConfig{Jitter: v.Float("jitter"), JitterMax: v.Float("jitter_max")})
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
					return false, "needs a differentiable model; {problem} " + phrase(t.NonDifferentiable, "is not differentiable")
				}
				return additiveOnly(t)
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
	}
}

// jitterParams are the parameters of the optional jitter repair that the
// Gaussian filters share (filters.UKFConfig.Jitter).
func jitterParams() []Param {
	return []Param{
		{Name: "jitter", Kind: Float, Default: Value{Num: 0}, Min: 0, Max: 1,
			Doc: "first relative jitter ε added to a covariance whose Cholesky factorization fails, ×10 per retry (0 = off; repairs are counted)"},
		{Name: "jitter_max", Kind: Float, Default: Value{Num: filters.DefaultJitterMax}, Min: 1e-15, Max: 1,
			Doc: "largest relative jitter tried"},
	}
}

func additiveOnly(t datasets.Traits) (bool, string) {
	if !t.AdditiveNoise {
		return false, "needs additive noise; {problem} " + phrase(t.NonAdditive, "has non-additive noise")
	}
	return true, ""
}

// phrase returns a problem's own words for a missing trait, or def.
func phrase(own, def string) string {
	if own != "" {
		return own
	}
	return def
}
