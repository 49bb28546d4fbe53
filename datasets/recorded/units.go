package recorded

import "math"

// kind is a quantity a mapping can name: its column prefix, canonical unit
// and the source units it converts from (factor to the canonical unit).
type kind struct {
	prefix string
	canon  string
	units  map[string]float64
	quat   bool // an orientation quaternion: four columns, an order
	scalar bool // one column, named by the prefix alone (a flag)
}

// Conversion factors: the definitions of the SI Brochure (BIPM 2019, 9th
// edition, tables 8 and 9, and section 2.3.4 on non-SI units): standard
// gravity g_n = 9.80665 m/s^2 (3rd CGPM 1901), 1 G = 1e-4 T, the nautical
// mile 1852 m, so 1 kn = 1852/3600 m/s.
var (
	angularRate  = map[string]float64{"rad/s": 1, "deg/s": math.Pi / 180}
	acceleration = map[string]float64{"m/s^2": 1, "g": 9.80665}
	magnetic     = map[string]float64{"uT": 1, "nT": 1e-3, "mT": 1e3, "T": 1e6, "G": 100, "mG": 0.1}
	length       = map[string]float64{"m": 1, "cm": 0.01, "mm": 0.001, "km": 1000}
	speed        = map[string]float64{"m/s": 1, "km/h": 1 / 3.6, "kn": 1852.0 / 3600}
	unitless     = map[string]float64{"": 1, "1": 1}
)

var kinds = map[string]kind{
	"gyro":          {prefix: "gyro", canon: "rad/s", units: angularRate},
	"accelerometer": {prefix: "accel", canon: "m/s^2", units: acceleration},
	"magnetometer":  {prefix: "mag", canon: "uT", units: magnetic},
	"position":      {prefix: "pos", canon: "m", units: length},
	"velocity":      {prefix: "vel", canon: "m/s", units: speed},
	"orientation":   {prefix: "quat", canon: "1", units: unitless, quat: true},
	"gyro-bias":     {prefix: "gyro_bias", canon: "rad/s", units: angularRate},
	"accel-bias":    {prefix: "accel_bias", canon: "m/s^2", units: acceleration},
	"flag":          {prefix: "flag", canon: "1", units: unitless, scalar: true},
}

// kindNames lists the kinds in the order the documentation gives them.
var kindNames = []string{"gyro", "accelerometer", "magnetometer", "position", "velocity", "orientation", "gyro-bias", "accel-bias", "flag"}
