package bench

import (
	"math"

	"github.com/estbench/estbench/datasets"
)

// builtinProblems is the one explicit list of built-in problems. A new
// problem is one constructor in datasets/ plus one entry here.
func builtinProblems() []ProblemSpec {
	return []ProblemSpec{
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
	}
}

func steps(def int) Param {
	return Param{Name: "steps", Kind: Int, Default: Value{Num: float64(def)}, Doc: "number of time steps", Min: 1, Max: 1e7}
}
