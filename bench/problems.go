package bench

import (
	"errors"
	"math"

	"github.com/estbench/estbench/datasets"
	"github.com/estbench/estbench/datasets/attitude"
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
		{
			Name:    "bearings",
			Summary: "bearings-only tracking of a nearly constant-velocity target from a fixed observer",
			Source:  "Gordon, Salmond & Smith 1993, IEE Proc. F 140(2), §4 (numbers from memory)",
			Params: []Param{
				steps(24),
				{Name: "sigma_q", Kind: Float, Default: Value{Num: 0.001}, Doc: "acceleration noise standard deviation per axis", Min: 1e-12, Max: 1e3},
				{Name: "sigma_theta", Kind: Float, Default: Value{Num: 0.005}, Doc: "bearing noise standard deviation in rad", Min: 1e-12, Max: 1},
				{Name: "start", Kind: String, Default: Value{Str: "published"}, Choices: []string{"published", "prior"},
					Doc: "true initial state: the published fixed start, or drawn from the prior"},
			},
			Build: func(v Values) (*datasets.Problem, error) {
				return datasets.NewBearings(datasets.BearingsConfig{Steps: v.Int("steps"), SigmaQ: v.Float("sigma_q"),
					SigmaTheta: v.Float("sigma_theta"), DrawStart: v.Str("start") == "prior"})
			},
		},
		{
			Name:    "reentry",
			Summary: "re-entry vehicle with unknown ballistic coefficient (5 states), range and bearing from a ground radar",
			Source:  "Athans, Wishner & Bertolini 1968, IEEE TAC 13(5); set-up of Julier & Uhlmann 2004, Proc. IEEE 92(3), §VI (numbers from memory)",
			Params: []Param{
				steps(2000),
				{Name: "dt", Kind: Float, Default: Value{Num: 0.1}, Doc: "measurement interval in s", Min: 1e-4, Max: 10},
				{Name: "substeps", Kind: Int, Default: Value{Num: 2}, Doc: "Runge-Kutta substeps per interval", Min: 1, Max: 1000},
				{Name: "q", Kind: Float, Default: Value{Num: 2.4064e-5}, Doc: "velocity noise variance per interval and axis in km²/s²", Min: 1e-15, Max: 1},
				{Name: "q5", Kind: Float, Default: Value{Num: 1e-6}, Doc: "noise variance of the ballistic coefficient the filters assume", Min: 1e-15, Max: 1},
				{Name: "sigma_r", Kind: Float, Default: Value{Num: 1e-3}, Doc: "range noise standard deviation in km", Min: 1e-9, Max: 100},
				{Name: "sigma_theta", Kind: Float, Default: Value{Num: 17e-3}, Doc: "bearing noise standard deviation in rad", Min: 1e-9, Max: 1},
			},
			Build: func(v Values) (*datasets.Problem, error) {
				return datasets.NewReentry(datasets.ReentryConfig{Steps: v.Int("steps"), Dt: v.Float("dt"), Substeps: v.Int("substeps"),
					Q: v.Float("q"), Q5: v.Float("q5"), SigmaR: v.Float("sigma_r"), SigmaTheta: v.Float("sigma_theta")})
			},
		},
		{
			Name:    "pendulum",
			Summary: "pendulum angle and rate, sine-of-angle measurement",
			Source:  "Särkkä 2013, Bayesian Filtering and Smoothing, Examples 3.7 and 5.1 (numbers from memory)",
			Params: []Param{
				steps(500),
				{Name: "dt", Kind: Float, Default: Value{Num: 0.01}, Doc: "sampling period in s", Min: 1e-6, Max: 1},
				{Name: "qc", Kind: Float, Default: Value{Num: 0.01}, Doc: "spectral density of the angular acceleration noise in rad²/s³", Min: 1e-12, Max: 1e6},
				{Name: "g", Kind: Float, Default: Value{Num: 9.81}, Doc: "gravity over pendulum length in 1/s²", Min: 1e-6, Max: 1e6},
				{Name: "r", Kind: Float, Default: Value{Num: 0.1}, Doc: "measurement noise variance", Min: 1e-12, Max: 1e6},
				{Name: "integrator", Kind: String, Default: Value{Str: "euler"}, Choices: []string{"euler", "rk4"},
					Doc: "discretisation: the book's explicit Euler step, or one Runge-Kutta step"},
			},
			Build: func(v Values) (*datasets.Problem, error) {
				return datasets.NewPendulum(datasets.PendulumConfig{Steps: v.Int("steps"), Dt: v.Float("dt"), Qc: v.Float("qc"),
					G: v.Float("g"), R: v.Float("r"), RK4: v.Str("integrator") == "rk4"})
			},
		},
		{
			Name:    "lorenz63",
			Summary: "Lorenz 1963 chaotic convection (3 states), RK4, partial observations, additive noise",
			Source:  "Lorenz 1963, J. Atmos. Sci. 20(2); as a filtering test: Miller, Ghil & Gauthiez 1994, J. Atmos. Sci. 51(8)",
			Params: []Param{
				steps(200),
				{Name: "sigma", Kind: Float, Default: Value{Num: 10}, Doc: "Prandtl number σ", Min: 1e-6, Max: 1e3},
				{Name: "rho", Kind: Float, Default: Value{Num: 28}, Doc: "Rayleigh number ρ", Min: 1e-6, Max: 1e3},
				{Name: "beta", Kind: Float, Default: Value{Num: 8.0 / 3}, Doc: "geometric factor β", Min: 1e-6, Max: 1e3},
				{Name: "dt", Kind: Float, Default: Value{Num: 0.05}, Doc: "time between measurements", Min: 1e-6, Max: 10},
				{Name: "rk_step", Kind: Float, Default: Value{Num: 0.01}, Doc: "Runge-Kutta step (must divide dt)", Min: 1e-6, Max: 1},
				{Name: "q", Kind: Float, Default: Value{Num: 0.01}, Doc: "process noise variance per step and component", Min: 1e-12, Max: 1e6},
				{Name: "r", Kind: Float, Default: Value{Num: 2}, Doc: "measurement noise variance per observed component", Min: 1e-12, Max: 1e6},
				{Name: "observe", Kind: String, Default: Value{Str: "x"}, Choices: []string{"x", "xz", "xyz"}, Doc: "observed components"},
			},
			Build: func(v Values) (*datasets.Problem, error) {
				return datasets.NewLorenz63(datasets.Lorenz63Config{Steps: v.Int("steps"), Sigma: v.Float("sigma"), Rho: v.Float("rho"),
					Beta: v.Float("beta"), Dt: v.Float("dt"), RKStep: v.Float("rk_step"), Q: v.Float("q"), R: v.Float("r"), Observe: v.Str("observe")})
			},
		},
		{
			Name:    "lorenz96",
			Summary: "Lorenz 1996 (40 states), RK4, every other variable observed; an ensemble-filter test",
			Source:  "Lorenz 1996, Proc. ECMWF Seminar on Predictability; Lorenz & Emanuel 1998, J. Atmos. Sci. 55(3)",
			Params: []Param{
				steps(200),
				{Name: "n", Kind: Int, Default: Value{Num: 40}, Doc: "number of variables", Min: 4, Max: 1000},
				{Name: "forcing", Kind: Float, Default: Value{Num: 8}, Doc: "forcing F", Min: 1e-6, Max: 100},
				{Name: "dt", Kind: Float, Default: Value{Num: 0.05}, Doc: "time between measurements (one Runge-Kutta step)", Min: 1e-6, Max: 0.2},
				{Name: "q", Kind: Float, Default: Value{Num: 0.01}, Doc: "process noise variance per step and variable", Min: 1e-12, Max: 1e6},
				{Name: "r", Kind: Float, Default: Value{Num: 1}, Doc: "measurement noise variance per observed variable", Min: 1e-12, Max: 1e6},
			},
			Build: func(v Values) (*datasets.Problem, error) {
				return datasets.NewLorenz96(datasets.Lorenz96Config{Steps: v.Int("steps"), N: v.Int("n"), F: v.Float("forcing"),
					Dt: v.Float("dt"), Q: v.Float("q"), R: v.Float("r")})
			},
		},
		{
			Name:    "stochvol",
			Summary: "stochastic volatility: AR(1) log-variance, returns with multiplicative noise (or their log-squares)",
			Source:  "Kim, Shephard & Chib 1998, Rev. Econ. Stud. 65(3); log-squared form: Harvey, Ruiz & Shephard 1994, Rev. Econ. Stud. 61(2)",
			Params: []Param{
				steps(500),
				{Name: "mu", Kind: Float, Default: Value{Num: 2 * math.Log(0.648)}, Doc: "mean μ of the log-variance", Min: -50, Max: 50},
				{Name: "phi", Kind: Float, Default: Value{Num: 0.978}, Doc: "persistence φ", Min: -0.9999, Max: 0.9999},
				{Name: "sigma_eta", Kind: Float, Default: Value{Num: 0.158}, Doc: "log-variance noise standard deviation σ_η", Min: 1e-9, Max: 10},
				{Name: "observe", Kind: String, Default: Value{Str: "returns"}, Choices: []string{"returns", "logsq"},
					Doc: "measurement: the return y (non-additive), or log y² (linear, additive log-χ² noise)"},
			},
			Build: func(v Values) (*datasets.Problem, error) {
				if v.Float("phi") == 0 {
					return nil, errors.New("phi must not be 0 (it would select the default)")
				}
				return datasets.NewStochVol(datasets.StochVolConfig{Steps: v.Int("steps"), Beta: math.Exp(v.Float("mu") / 2),
					Phi: v.Float("phi"), SigmaEta: v.Float("sigma_eta"), LogSquared: v.Str("observe") == "logsq"})
			},
		},
		{
			Name:    "friction",
			Summary: "survey cart on rails with Coulomb and viscous friction, speed measurements (our scenario)",
			Source:  "our scenario; dry (Coulomb) plus viscous friction law, explicit Euler step",
			Params: []Param{
				steps(400),
				{Name: "dt", Kind: Float, Default: Value{Num: 0.1}, Doc: "sampling period in s", Min: 1e-6, Max: 10},
				{Name: "viscous", Kind: Float, Default: Value{Num: 0.2}, Doc: "viscous friction coefficient in 1/s", Min: 1e-9, Max: 1e3},
				{Name: "coulomb", Kind: Float, Default: Value{Num: 1}, Doc: "Coulomb friction deceleration in m/s²", Min: 1e-9, Max: 1e3},
				{Name: "drive", Kind: Float, Default: Value{Num: 2}, Doc: "drive acceleration amplitude in m/s²", Min: 1e-9, Max: 1e3},
				{Name: "drive_period", Kind: Float, Default: Value{Num: 20}, Doc: "drive period in s", Min: 1e-6, Max: 1e6},
				{Name: "q", Kind: Float, Default: Value{Num: 0.05}, Doc: "random force spectral density in m²/s³", Min: 1e-12, Max: 1e6},
				{Name: "r", Kind: Float, Default: Value{Num: 0.01}, Doc: "speed noise variance in m²/s²", Min: 1e-12, Max: 1e6},
			},
			Build: func(v Values) (*datasets.Problem, error) {
				return datasets.NewFriction(datasets.FrictionConfig{Steps: v.Int("steps"), Dt: v.Float("dt"), Viscous: v.Float("viscous"),
					Coulomb: v.Float("coulomb"), Drive: v.Float("drive"), DrivePeriod: v.Float("drive_period"), Q: v.Float("q"), R: v.Float("r")})
			},
		},
		{
			Name:    "multnoise",
			Summary: "stochastic Ricker population map with multiplicative (log-normal) process noise, Gaussian census",
			Source:  "Ricker 1954, J. Fish. Res. Board Can. 11(5); noise and growth rate of Wood 2010, Nature 466 (from memory)",
			Params: []Param{
				steps(100),
				{Name: "log_r", Kind: Float, Default: Value{Num: 3.8}, Doc: "log growth rate ln r", Min: -19, Max: 19},
				{Name: "sigma_e", Kind: Float, Default: Value{Num: 0.3}, Doc: "standard deviation of the log-normal noise", Min: 1e-9, Max: 10},
				{Name: "r", Kind: Float, Default: Value{Num: 0.25}, Doc: "census noise variance", Min: 1e-12, Max: 1e6},
			},
			Build: func(v Values) (*datasets.Problem, error) {
				if v.Float("log_r") == 0 {
					return nil, errors.New("log_r must not be 0 (it would select the default)")
				}
				return datasets.NewRicker(datasets.RickerConfig{Steps: v.Int("steps"), LogR: v.Float("log_r"), SigmaE: v.Float("sigma_e"), R: v.Float("r")})
			},
		},
		{
			Name:    "heavytail",
			Summary: "cv2d observed through heavy-tailed noise: glint (Gaussian mixture) or Student t",
			Source:  "glint: Hewer, Martin & Zeh 1987, IEEE TAES 23(1); contaminated Gaussian: Masreliez & Martin 1977, IEEE TAC 22(3)",
			Params: []Param{
				steps(100),
				{Name: "dt", Kind: Float, Default: Value{Num: 1}, Doc: "sampling period in s", Min: 1e-9, Max: 1e9},
				{Name: "q", Kind: Float, Default: Value{Num: 1}, Doc: "acceleration noise variance in m²/s⁴", Min: 1e-12, Max: 1e12},
				{Name: "noise", Kind: String, Default: Value{Str: "glint"}, Choices: []string{"glint", "t"}, Doc: "measurement noise law"},
				{Name: "sigma", Kind: Float, Default: Value{Num: 10}, Doc: "nominal noise standard deviation (glint) or scale (t) per axis in m", Min: 1e-9, Max: 1e9},
				{Name: "eps", Kind: Float, Default: Value{Num: 0.1}, Doc: "glint: probability of the wide component", Min: 1e-9, Max: 0.999999},
				{Name: "ratio", Kind: Float, Default: Value{Num: 10}, Doc: "glint: wide over nominal standard deviation", Min: 1, Max: 1e6},
				{Name: "nu", Kind: Float, Default: Value{Num: 3}, Doc: "t: degrees of freedom", Min: 2.000001, Max: 1e6},
			},
			Build: func(v Values) (*datasets.Problem, error) {
				return datasets.NewHeavyTail(datasets.HeavyTailConfig{Steps: v.Int("steps"), Dt: v.Float("dt"), Q: v.Float("q"),
					Noise: v.Str("noise"), Sigma: v.Float("sigma"), Eps: v.Float("eps"), Ratio: v.Float("ratio"), Nu: v.Float("nu")})
			},
		},
		{
			Name:    "quantised",
			Summary: "drone altitude from an altimeter quantised to whole steps, noise before the quantiser (our scenario)",
			Source:  "our scenario; DWNA motion of Bar-Shalom, Li & Kirubarajan 2001, §6.3.2",
			Params: []Param{
				steps(100),
				{Name: "dt", Kind: Float, Default: Value{Num: 1}, Doc: "sampling period in s", Min: 1e-9, Max: 1e9},
				{Name: "q", Kind: Float, Default: Value{Num: 0.01}, Doc: "vertical acceleration noise variance in m²/s⁴", Min: 1e-12, Max: 1e12},
				{Name: "step", Kind: Float, Default: Value{Num: 1}, Doc: "quantisation step in m", Min: 1e-9, Max: 1e9},
				{Name: "sigma", Kind: Float, Default: Value{Num: 0.2}, Doc: "sensor noise standard deviation before the quantiser in m", Min: 1e-9, Max: 1e9},
			},
			Build: func(v Values) (*datasets.Problem, error) {
				return datasets.NewQuantised(datasets.QuantisedConfig{Steps: v.Int("steps"), Dt: v.Float("dt"), Q: v.Float("q"),
					Step: v.Float("step"), Sigma: v.Float("sigma")})
			},
		},
		{
			Name:    "radar-replay",
			Summary: "a real vessel track (smoothed) replayed as truth, seen by a simulated range-bearing radar (our scenario)",
			Source: "real AIS/GPX/NMEA track (dataset named in the file's SOURCE.md; default: MarineCadastre AIS, US Coast Guard / BOEM / NOAA) " +
				"with a simulated range-bearing sensor; RTS smoother: Rauch, Tung & Striebel 1965, AIAA J. 3(8)",
			Params: []Param{
				{Name: "steps", Kind: Int, Default: Value{Num: 0}, Doc: "number of time steps; 0 = the whole resampled track", Min: 0, Max: 1e7},
				{Name: "file", Kind: String, Default: Value{Str: ""}, Doc: "recording to replay, relative to the current directory, or NAME:FILE for a file of a fetched public dataset (estbench data list); empty = the shared AIS sample of New York Harbor"},
				{Name: "format", Kind: String, Default: Value{Str: "auto"}, Choices: []string{"auto", "ais-csv", "ais-nmea", "gpx", "nmea"},
					Doc: "format of the file; auto follows the extension (.csv, .gpx, .log/.nmea/.txt)"},
				{Name: "track", Kind: String, Default: Value{Str: ""}, Doc: "track ID (MMSI, GPX track name, NMEA talker) or #n; empty = the longest path"},
				{Name: "min_points", Kind: Int, Default: Value{Num: 15}, Doc: "fewest fixes of a track to be used", Min: 2, Max: 1e9},
				{Name: "site", Kind: String, Default: Value{Str: "-3000,2000"}, Doc: `radar site: "E,N" metres from the first fix, or "geo:LAT,LON" degrees`},
				{Name: "sigma_r", Kind: Float, Default: Value{Num: 15}, Doc: "range noise standard deviation in m", Min: 1e-9, Max: 1e9},
				{Name: "sigma_theta", Kind: Float, Default: Value{Num: 2e-3}, Doc: "bearing noise standard deviation in rad", Min: 1e-12, Max: 1},
				{Name: "dt", Kind: Float, Default: Value{Num: 10}, Doc: "step the track is resampled to, in s", Min: 1e-3, Max: 1e6},
				{Name: "motion", Kind: String, Default: Value{Str: "cv"}, Choices: []string{"cv", "ct"}, Doc: "filters' motion model: constant velocity or coordinated turn"},
				{Name: "q", Kind: Float, Default: Value{Num: 0.1}, Doc: "acceleration noise intensity of the model in m²/s³", Min: 1e-12, Max: 1e12},
				{Name: "q2", Kind: Float, Default: Value{Num: 1e-5}, Doc: "ct: turn-rate noise intensity in rad²/s³", Min: 1e-15, Max: 1e6},
			},
			Build: func(v Values) (*datasets.Problem, error) {
				return datasets.NewRadarReplay(datasets.RadarReplayConfig{Steps: v.Int("steps"), File: v.Str("file"), Format: v.Str("format"),
					Track: v.Str("track"), MinPoints: v.Int("min_points"), Site: v.Str("site"), SigmaR: v.Float("sigma_r"),
					SigmaTheta: v.Float("sigma_theta"), Dt: v.Float("dt"), Motion: v.Str("motion"), Q: v.Float("q"), Q2: v.Float("q2")})
			},
		},
		{
			Name:    "track",
			Summary: "a real track's recorded fixes as position measurements (each with its stated accuracy where the receiver gives one), no ground truth: scored by pred_rmse and ANIS only",
			Source: "real AIS/GPX/NMEA track (dataset named in the file's SOURCE.md; default: MarineCadastre AIS, US Coast Guard / BOEM / NOAA); " +
				"two-point initialisation and CWNA model: Bar-Shalom, Li & Kirubarajan 2001, §5.5.3, §6.2.2",
			Params: []Param{
				{Name: "steps", Kind: Int, Default: Value{Num: 0}, Doc: "number of time steps; 0 = up to the last fix", Min: 0, Max: 1e7},
				{Name: "file", Kind: String, Default: Value{Str: ""}, Doc: "recording, relative to the current directory, or NAME:FILE for a file of a fetched public dataset (estbench data list); empty = the shared AIS sample of New York Harbor"},
				{Name: "format", Kind: String, Default: Value{Str: "auto"}, Choices: []string{"auto", "ais-csv", "ais-nmea", "gpx", "nmea"},
					Doc: "format of the file; auto follows the extension (.csv, .gpx, .log/.nmea/.txt)"},
				{Name: "track", Kind: String, Default: Value{Str: ""}, Doc: "track ID (MMSI, GPX track name, NMEA talker) or #n; empty = the longest path"},
				{Name: "min_points", Kind: Int, Default: Value{Num: 15}, Doc: "fewest fixes of a track to be used", Min: 3, Max: 1e9},
				{Name: "sigma", Kind: Float, Default: Value{Num: 10}, Doc: "fix noise standard deviation per axis in m (with noise = stated, of the fixes that state none)", Min: 1e-6, Max: 1e6},
				{Name: "noise", Kind: String, Default: Value{Str: "stated"}, Choices: []string{"stated", "fixed"},
					Doc: "stated: each fix's own accuracy where its receiver states one (NMEA GST), sigma elsewhere; fixed: sigma for every fix"},
				{Name: "dt", Kind: Float, Default: Value{Num: 10}, Doc: "step in s; a step without a fix within dt/2 has no measurement", Min: 1e-3, Max: 1e6},
				{Name: "motion", Kind: String, Default: Value{Str: "cv"}, Choices: []string{"cv", "ct"}, Doc: "filters' motion model: constant velocity or coordinated turn"},
				{Name: "q", Kind: Float, Default: Value{Num: 0.1}, Doc: "acceleration noise intensity of the model in m²/s³", Min: 1e-12, Max: 1e12},
				{Name: "q2", Kind: Float, Default: Value{Num: 1e-5}, Doc: "ct: turn-rate noise intensity in rad²/s³", Min: 1e-15, Max: 1e6},
			},
			Build: func(v Values) (*datasets.Problem, error) {
				return datasets.NewTrack(datasets.TrackConfig{Steps: v.Int("steps"), File: v.Str("file"), Format: v.Str("format"),
					Track: v.Str("track"), MinPoints: v.Int("min_points"), Sigma: v.Float("sigma"), Noise: v.Str("noise"), Dt: v.Float("dt"),
					Motion: v.Str("motion"), Q: v.Float("q"), Q2: v.Float("q2")})
			},
		},
		{
			Name:    "attitude",
			Summary: "orientation from a recorded gyroscope and accelerometer (magnetometer optional) against mocap truth; unit-quaternion state, error in degrees",
			Source: "real IMU + motion capture (default: BROAD trial 21, Laidig, Caruso, Cereatti & Seel 2021, Data 6(7):72, CC BY 4.0); " +
				"multiplicative error: Markley 2003, J. Guid. Control Dyn. 26(2)",
			Params: []Param{
				{Name: "steps", Kind: Int, Default: Value{Num: 0}, Doc: "number of time steps; 0 = every row of the recording", Min: 0, Max: 1e8},
				{Name: "file", Kind: String, Default: Value{Str: ""}, Doc: "recording: an .arrow file or a folder read with a mapping, or NAME:FILE of a fetched public dataset; empty = the shared BROAD sample (broad-imu-mocap)"},
				{Name: "mapping", Kind: String, Default: Value{Str: ""}, Doc: "mapping TOML file or shipped mapping name for a folder; empty = the shipped mapping named after the folder"},
				{Name: "magnetometer", Kind: String, Default: Value{Str: "off"}, Choices: []string{"off", "on"}, Doc: "also measure the magnetometer (heading is unobservable without it)"},
				{Name: "gyro_noise", Kind: Float, Default: Value{Num: 0.03}, Doc: "gyro sample standard deviation in rad/s (attitude process noise)", Min: 1e-9, Max: 1e3},
				{Name: "bias_noise", Kind: Float, Default: Value{Num: 1e-5}, Doc: "gyro bias random walk in rad/s/√s", Min: 1e-12, Max: 1e3},
				{Name: "acc_noise", Kind: Float, Default: Value{Num: 20}, Doc: "accelerometer standard deviation per axis in m/s², motion included", Min: 1e-9, Max: 1e3},
				{Name: "mag_noise", Kind: Float, Default: Value{Num: 10}, Doc: "magnetometer standard deviation per axis in µT", Min: 1e-9, Max: 1e4},
				{Name: "prior_deg", Kind: Float, Default: Value{Num: 5}, Doc: "standard deviation of the prior attitude error per axis in degrees (each run draws one)", Min: 1e-6, Max: 90},
				{Name: "prior_bias", Kind: Float, Default: Value{Num: 0.01}, Doc: "prior standard deviation of each gyro bias component in rad/s", Min: 1e-9, Max: 10},
				{Name: "chart", Kind: String, Default: Value{Str: attitude.ChartRotVec}, Choices: []string{attitude.ChartRotVec, attitude.ChartGRP},
					Doc: "coordinates of the attitude error: rotation vector, or the generalized Rodrigues parameters (a=1, f=4) of Crassidis & Markley 2003"},
			},
			Build: func(v Values) (*datasets.Problem, error) {
				return attitude.New(attitude.Config{Steps: v.Int("steps"), File: v.Str("file"), Mapping: v.Str("mapping"),
					Magnetometer: v.Str("magnetometer") == "on", GyroNoise: v.Float("gyro_noise"), BiasNoise: v.Float("bias_noise"),
					AccNoise: v.Float("acc_noise"), MagNoise: v.Float("mag_noise"), PriorDeg: v.Float("prior_deg"), PriorBias: v.Float("prior_bias"),
					Chart: v.Str("chart")})
			},
		},
	}
}

func steps(def int) Param {
	return Param{Name: "steps", Kind: Int, Default: Value{Num: float64(def)}, Doc: "number of time steps", Min: 1, Max: 1e7}
}
