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
			Name:     "ekf",
			Manifold: true,
			Summary:  "extended Kalman filter; analytic Jacobians when the model has them, else central differences; on a manifold state (attitude) the multiplicative error-state EKF",
			Source:   "Jazwinski 1970, Stochastic Processes and Filtering Theory; Bar-Shalom et al. 2001, §10.3; multiplicative EKF: Markley 2003, J. Guid. Control Dyn. 26(2)",
			Traits:   "needs a differentiable model",
			Params: append([]Param{
				{Name: "diff_step", Kind: Float, Default: Value{Num: 1e-6}, Doc: "relative central-difference step when the model has no Jacobian", Min: 1e-12, Max: 1},
			}, jitterParams()...),
			Applies: func(t datasets.Traits) (bool, string) {
				if !t.Differentiable {
					return false, "needs a differentiable model; {problem} " + phrase(t.NonDifferentiable, "is not differentiable")
				}
				return additiveOnly(t)
			},
			New: func(m *filters.Model, v Values) (filters.Filter, error) {
				return filters.NewEKF(m, filters.EKFConfig{Step: v.Float("diff_step"), Jitter: v.Float("jitter"), JitterMax: v.Float("jitter_max")})
			},
		},
		{
			Name:     "ukf",
			Manifold: true,
			Summary:  "unscented Kalman filter, additive noise; sigma points scaled (default), symmetric or spherical simplex; Joseph-form update; on a manifold state, sigma points in the error and a mean on the manifold",
			Source:   "Julier 2002 and Julier 2003, Proc. American Control Conf.; Julier & Uhlmann 1997, Proc. SPIE 3068; Wan & van der Merwe 2000, Proc. IEEE AS-SPCC; on a quaternion: Crassidis & Markley 2003, J. Guid. Control Dyn. 26(4)",
			Traits:   "any model with additive noise (for non-additive noise see ukf-aug)",
			Params:   ukfParams(),
			Applies:  additiveOnly,
			New: func(m *filters.Model, v Values) (filters.Filter, error) {
				return filters.NewUKF(m, ukfConfig(v, false))
			},
		},
		{
			Name:    "ukf-aug",
			Summary: "unscented Kalman filter with the state augmented by the process noise (predict) and the measurement noise (update); sigma points as ukf",
			Source:  "Wan & van der Merwe 2000, Proc. IEEE AS-SPCC; sigma points as ukf",
			Traits:  "any model; noise may enter non-additively (the model's FW/HV), additive noise is augmented too",
			Params:  ukfParams(),
			Applies: func(datasets.Traits) (bool, string) { return true, "" },
			New: func(m *filters.Model, v Values) (filters.Filter, error) {
				return filters.NewUKF(m, ukfConfig(v, true))
			},
		},
		{
			Name:    "iekf",
			Summary: "iterated extended Kalman filter: Gauss-Newton measurement update, Joseph-form covariance",
			Source:  "Bell & Cathey 1993, IEEE TAC 38(2)",
			Traits:  "needs a differentiable model with additive noise",
			Params: append([]Param{
				{Name: "max_iter", Kind: Int, Default: Value{Num: filters.DefaultIEKFMaxIter}, Doc: "largest number of Gauss-Newton iterations per update (1 = ekf)", Min: 1, Max: 1000},
				{Name: "tol", Kind: Float, Default: Value{Num: filters.DefaultIEKFTol}, Doc: "stop when no component moves by more than tol × max(1, |x_i|)", Min: 1e-16, Max: 1},
				{Name: "diff_step", Kind: Float, Default: Value{Num: 1e-6}, Doc: "relative central-difference step when the model has no Jacobian", Min: 1e-12, Max: 1},
			}, jitterParams()...),
			Applies: func(t datasets.Traits) (bool, string) {
				if !t.Differentiable {
					return false, "needs a differentiable model; {problem} " + phrase(t.NonDifferentiable, "is not differentiable")
				}
				return additiveOnly(t)
			},
			New: func(m *filters.Model, v Values) (filters.Filter, error) {
				return filters.NewIEKF(m, filters.IEKFConfig{MaxIter: v.Int("max_iter"), Tol: v.Float("tol"), Step: v.Float("diff_step"),
					Jitter: v.Float("jitter"), JitterMax: v.Float("jitter_max")})
			},
		},
		{
			Name:    "srukf",
			Summary: "square-root unscented Kalman filter: Cholesky factor propagated by QR and rank-one updates, scaled sigma points",
			Source:  "van der Merwe & Wan 2001, Proc. IEEE ICASSP; Julier 2002, Proc. American Control Conf.",
			Traits:  "any model with additive noise",
			Params: append([]Param{
				{Name: "alpha", Kind: Float, Default: Value{Num: 1}, Doc: "spread of the sigma points", Min: 1e-6, Max: 10},
				{Name: "beta", Kind: Float, Default: Value{Num: 2}, Doc: "prior knowledge of the distribution (2 for Gaussian)", Min: -1e3, Max: 1e3},
				{Name: "kappa", Kind: Float, Default: Value{Num: 0}, Doc: "secondary scaling", Min: -1e3, Max: 1e3},
			}, jitterParams()...),
			Applies: additiveOnly,
			New: func(m *filters.Model, v Values) (filters.Filter, error) {
				return filters.NewSRUKF(m, filters.SRUKFConfig{Alpha: v.Float("alpha"), Beta: v.Float("beta"), Kappa: v.Float("kappa"),
					Jitter: v.Float("jitter"), JitterMax: v.Float("jitter_max")})
			},
		},
		{
			Name:     "ckf",
			Manifold: true,
			Summary:  "cubature Kalman filter, third-degree spherical-radial rule (2n points)",
			Source:   "Arasaratnam & Haykin 2009, IEEE TAC 54(6)",
			Traits:   "any model with additive noise",
			Params:   jitterParams(),
			Applies:  additiveOnly,
			New: func(m *filters.Model, v Values) (filters.Filter, error) {
				return filters.NewCKF(m, filters.CKFConfig{Jitter: v.Float("jitter"), JitterMax: v.Float("jitter_max")})
			},
		},
		{
			Name:     "ghkf",
			Manifold: true,
			Summary:  "Gauss-Hermite Kalman filter, tensor-product rule of order p (p^n points: grows fast with the state dimension)",
			Source:   "Ito & Xiong 2000, IEEE TAC 45(5); nodes by Golub & Welsch 1969, Math. Comp. 23",
			Traits:   "any model with additive noise and order^n <= 100000",
			Params: append([]Param{
				{Name: "order", Kind: Int, Default: Value{Num: filters.DefaultGHKFOrder}, Doc: "Gauss-Hermite nodes per dimension (the set has order^n points, at most 100000)", Min: 2, Max: 64},
			}, jitterParams()...),
			Applies: additiveOnly,
			New: func(m *filters.Model, v Values) (filters.Filter, error) {
				return filters.NewGHKF(m, filters.GHKFConfig{Order: v.Int("order"), Jitter: v.Float("jitter"), JitterMax: v.Float("jitter_max")})
			},
		},
		{
			Name:     "pf",
			Manifold: true,
			Summary:  "bootstrap particle filter, log-weights, resampling on an ESS threshold (systematic, stratified, multinomial or residual), optional roughening; on a manifold state (attitude) noise in the tangent and the weighted Karcher mean",
			Source:   "Gordon, Salmond & Smith 1993, IEE Proc. F 140(2); systematic resampling: Kitagawa 1996; schemes: Douc, Cappé & Moulines 2005, ISPA; Karcher mean: Hauberg, Lauze & Pedersen 2013, J. Math. Imaging Vis. 46(1)",
			Traits:   particleTraits,
			Params: []Param{
				particlesParam(),
				resampleESSParam(),
				resampleParam(),
				{Name: "roughening", Kind: Float, Default: Value{Num: 0}, Min: 0, Max: 10,
					Doc: "roughening constant K: after resampling, jitter of sd K·E·N^(-1/d), E the range of each component (0 = off; not on a manifold state)"},
			},
			Applies: particleApplies,
			New: func(m *filters.Model, v Values) (filters.Filter, error) {
				s, err := filters.ParseResampling(v.Str("resample"))
				if err != nil {
					return nil, err
				}
				return filters.NewPF(m, filters.PFConfig{Particles: v.Int("particles"), ResampleThreshold: v.Float("resample_ess"),
					Resample: s, Roughening: v.Float("roughening")})
			},
		},
		{
			Name:    "apf",
			Summary: "auxiliary particle filter, first-stage weights from the likelihood at the predicted mean point F(x_i), resampling every step",
			Source:  "Pitt & Shephard 1999, JASA 94(446)",
			Traits:  particleTraits,
			Params:  []Param{particlesParam(), resampleParam()},
			Applies: particleApplies,
			New: func(m *filters.Model, v Values) (filters.Filter, error) {
				s, err := filters.ParseResampling(v.Str("resample"))
				if err != nil {
					return nil, err
				}
				return filters.NewAPF(m, filters.APFConfig{Particles: v.Int("particles"), Resample: s})
			},
		},
		{
			Name:    "rpf",
			Summary: "post-regularised particle filter, Gaussian kernel with the optimal bandwidth after each resampling",
			Source:  "Musso, Oudjane & Le Gland 2001, in Doucet, de Freitas & Gordon (eds.), Sequential Monte Carlo Methods in Practice, ch. 12",
			Traits:  particleTraits,
			Params: []Param{particlesParam(), {Name: "resample_ess", Kind: Float, Default: Value{Num: filters.DefaultRPFResampleThreshold}, Min: 1e-9, Max: 1,
				Doc: "resample and regularise when ESS < resample_ess × N (at every step the kernel over-spreads models with little process noise)"}, resampleParam()},
			Applies: particleApplies,
			New: func(m *filters.Model, v Values) (filters.Filter, error) {
				s, err := filters.ParseResampling(v.Str("resample"))
				if err != nil {
					return nil, err
				}
				return filters.NewRPF(m, filters.RPFConfig{Particles: v.Int("particles"), ResampleThreshold: v.Float("resample_ess"), Resample: s})
			},
		},
		{
			Name:    "enkf",
			Summary: "ensemble Kalman filter with perturbed observations, optional multiplicative inflation",
			Source:  "Evensen 2003, Ocean Dynamics 53; Burgers, van Leeuwen & Evensen 1998, Mon. Weather Rev. 126(6); inflation: Anderson & Anderson 1999, Mon. Weather Rev. 127(12)",
			Traits:  "needs additive measurement noise (non-additive process noise is sampled); R is taken as the noise covariance",
			Params: []Param{
				{Name: "members", Kind: Int, Default: Value{Num: filters.DefaultEnKFMembers}, Doc: "ensemble size N", Min: 2, Max: 1e7},
				{Name: "inflation", Kind: Float, Default: Value{Num: 1}, Min: 1, Max: 10,
					Doc: "factor on the forecast deviations from the ensemble mean (1 = off)"},
			},
			// Non-additive process noise (FW) is sampled; non-additive
			// measurement noise (HV) is not applicable.
			Applies: func(t datasets.Traits) (bool, string) {
				if t.NonAdditiveMeas {
					return false, "needs additive measurement noise; {problem} " + phrase(t.NonAdditive, "has non-additive measurement noise")
				}
				return true, ""
			},
			New: func(m *filters.Model, v Values) (filters.Filter, error) {
				return filters.NewEnKF(m, filters.EnKFConfig{Members: v.Int("members"), Inflation: v.Float("inflation")})
			},
		},
	}
}

// ukfParams are the parameters of ukf and ukf-aug.
func ukfParams() []Param {
	return append([]Param{
		{Name: "points", Kind: String, Default: Value{Str: filters.PointsScaled}, Doc: "sigma-point set: scaled (2n+1 points; alpha, beta, kappa), symmetric (2n+1; kappa), simplex (n+2; w0)",
			Choices: []string{filters.PointsScaled, filters.PointsSymmetric, filters.PointsSimplex}},
		{Name: "alpha", Kind: Float, Default: Value{Num: 1}, Doc: "spread of the sigma points (scaled set)", Min: 1e-6, Max: 10},
		{Name: "beta", Kind: Float, Default: Value{Num: 2}, Doc: "prior knowledge of the distribution, 2 for Gaussian (scaled set)", Min: -1e3, Max: 1e3},
		{Name: "kappa", Kind: Float, Default: Value{Num: 0}, Doc: "secondary scaling (scaled and symmetric sets; symmetric: central weight kappa/(n+kappa))", Min: -1e3, Max: 1e3},
		{Name: "w0", Kind: Float, Default: Value{Num: 0}, Doc: "weight of the central point (simplex set), in [0, 1)", Min: 0, Max: 0.999},
	}, jitterParams()...)
}

func ukfConfig(v Values, augment bool) filters.UKFConfig {
	return filters.UKFConfig{Points: v.Str("points"), Alpha: v.Float("alpha"), Beta: v.Float("beta"), Kappa: v.Float("kappa"),
		W0: v.Float("w0"), Augment: augment, Jitter: v.Float("jitter"), JitterMax: v.Float("jitter_max")}
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

// particleTraits is what pf, apf and rpf need, for the listing.
const particleTraits = "any model it can simulate; non-additive measurement noise needs the model's exact likelihood (MeasLogLik)"

// particleApplies accepts every problem: pf, apf and rpf run on additive
// and non-additive noise. A model whose measurement noise is not additive
// (HV) and that has no MeasLogLik is refused by the filter's constructor
// instead (Traits do not say whether the likelihood is known), which the
// runner notes as "cannot be set up".
func particleApplies(datasets.Traits) (bool, string) { return true, "" }

func particlesParam() Param {
	return Param{Name: "particles", Kind: Int, Default: Value{Num: filters.DefaultPFParticles}, Doc: "number of particles N", Min: 1, Max: 1e8}
}

func resampleESSParam() Param {
	return Param{Name: "resample_ess", Kind: Float, Default: Value{Num: filters.DefaultPFResampleThreshold}, Doc: "resample when ESS < resample_ess × N (1 = every step)", Min: 1e-9, Max: 1}
}

func resampleParam() Param {
	return Param{Name: "resample", Kind: String, Default: Value{Str: filters.ResampleSystematic.String()}, Choices: filters.ResamplingNames(),
		Doc: "resampling scheme"}
}
