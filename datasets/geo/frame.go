package geo

import "math"

// Frame is a local tangent frame about a reference point: east-north-up
// (ENU) or north-east-down (NED) axes, origin at the reference point.
type Frame struct {
	origin Geodetic
	o      Vec3       // ECEF coordinates of the origin
	r      [9]float64 // ECEF -> ENU rotation, row-major
}

// NewFrame returns the local frame about origin.
func NewFrame(origin Geodetic) Frame {
	sl, cl := math.Sincos(origin.Lat * deg)
	so, co := math.Sincos(origin.Lon * deg)
	return Frame{
		origin: origin,
		o:      ToECEF(origin),
		r: [9]float64{
			-so, co, 0,
			-sl * co, -sl * so, cl,
			cl * co, cl * so, sl,
		},
	}
}

// Origin returns the frame's reference point.
func (f *Frame) Origin() Geodetic { return f.origin }

// Rotation returns the row-major rotation matrix taking ECEF vectors to
// ENU vectors; its transpose takes ENU to ECEF.
func (f *Frame) Rotation() [9]float64 { return f.r }

// ECEFToENU returns the ENU coordinates of the ECEF point x.
func (f *Frame) ECEFToENU(x Vec3) Vec3 {
	d := Vec3{x[0] - f.o[0], x[1] - f.o[1], x[2] - f.o[2]}
	r := &f.r
	return Vec3{
		r[0]*d[0] + r[1]*d[1] + r[2]*d[2],
		r[3]*d[0] + r[4]*d[1] + r[5]*d[2],
		r[6]*d[0] + r[7]*d[1] + r[8]*d[2],
	}
}

// ENUToECEF returns the ECEF coordinates of the local ENU point e.
func (f *Frame) ENUToECEF(e Vec3) Vec3 {
	r := &f.r
	return Vec3{
		f.o[0] + r[0]*e[0] + r[3]*e[1] + r[6]*e[2],
		f.o[1] + r[1]*e[0] + r[4]*e[1] + r[7]*e[2],
		f.o[2] + r[2]*e[0] + r[5]*e[1] + r[8]*e[2],
	}
}

// ENU returns the local east, north, up coordinates of p.
func (f *Frame) ENU(p Geodetic) Vec3 { return f.ECEFToENU(ToECEF(p)) }

// NED returns the local north, east, down coordinates of p.
func (f *Frame) NED(p Geodetic) Vec3 { return ENUToNED(f.ENU(p)) }

// FromENU returns the geodetic coordinates of the local ENU point e.
func (f *Frame) FromENU(e Vec3) Geodetic { return ToGeodetic(f.ENUToECEF(e)) }

// FromNED returns the geodetic coordinates of the local NED point n.
func (f *Frame) FromNED(n Vec3) Geodetic { return f.FromENU(ENUToNED(n)) }

// ENUToNED swaps east-north-up components to north-east-down; the map is
// its own inverse, so it also takes NED to ENU.
func ENUToNED(v Vec3) Vec3 { return Vec3{v[1], v[0], -v[2]} }
