package geo

import "math"

// WGS-84 ellipsoid (NIMA TR8350.2, 3rd ed. 2000: defining parameters in
// Table 3.1, derived constants in Table 3.3; table numbers from memory).
const (
	A    = 6378137.0     // semi-major axis, metres (defining)
	InvF = 298.257223563 // inverse flattening 1/f (defining)

	F  = 1 / InvF     // flattening
	B  = A * (1 - F)  // semi-minor axis, metres (TR8350.2: 6356752.3142 m)
	E2 = F * (2 - F)  // first eccentricity squared (TR8350.2: 6.69437999014e-3)
	e4 = E2 * E2      // e⁴
	b2 = (1 - E2) / A // (1-e²)/a, used by the inverse
)

// Geodetic is a WGS-84 position: latitude and longitude in degrees,
// height in metres above the ellipsoid.
type Geodetic struct {
	Lat, Lon, H float64
}

// Vec3 is a Cartesian vector in metres (ECEF, ENU or NED by context) or a
// body-frame vector.
type Vec3 [3]float64

const deg = math.Pi / 180

// ToECEF returns the Earth-centred Earth-fixed coordinates of p.
func ToECEF(p Geodetic) Vec3 {
	sl, cl := math.Sincos(p.Lat * deg)
	so, co := math.Sincos(p.Lon * deg)
	n := A / math.Sqrt(1-E2*sl*sl) // prime vertical radius of curvature
	r := (n + p.H) * cl
	return Vec3{r * co, r * so, (n*(1-E2) + p.H) * sl}
}

// ToGeodetic returns the geodetic coordinates of the ECEF point x.
//
// It uses the closed form of Vermeille (2002), "Direct transformation from
// geocentric coordinates to geodetic coordinates", Journal of Geodesy 76,
// 451-454 (from memory), which is exact up to rounding (well below 1 mm)
// for every point farther than about 43 km from the Earth's centre. Inside
// that region (the ellipse's evolute, where geodetic coordinates are not
// unique) the closed form does not apply and a fixed-point iteration on
// latitude returns one of the solutions.
func ToGeodetic(x Vec3) Geodetic {
	rho2 := x[0]*x[0] + x[1]*x[1]
	rho := math.Sqrt(rho2)
	z := x[2]
	lon := math.Atan2(x[1], x[0]) / deg
	p := rho2 / (A * A)
	q := b2 / A * z * z
	r := (p + q - e4) / 6
	if r > 0 {
		s := e4 * p * q / (4 * r * r * r)
		t := math.Cbrt(1 + s + math.Sqrt(s*(2+s)))
		u := r * (1 + t + 1/t)
		v := math.Sqrt(u*u + e4*q)
		w := E2 * (u + v - q) / (2 * v)
		k := math.Sqrt(u+v+w*w) - w
		d := k * rho / (k + E2)
		lat := math.Atan2(z, d)
		h := (k + E2 - 1) / k * math.Hypot(d, z)
		return Geodetic{lat / deg, lon, h}
	}
	return nearCentre(rho, z, lon)
}

// nearCentre solves for latitude by fixed-point iteration, for points
// inside the evolute where the closed form does not apply.
func nearCentre(rho, z, lon float64) Geodetic {
	if rho == 0 && z == 0 {
		return Geodetic{0, lon, -A}
	}
	lat := math.Atan2(z, rho*(1-E2))
	for range 100 {
		sl := math.Sin(lat)
		n := A / math.Sqrt(1-E2*sl*sl)
		next := math.Atan2(z+E2*n*sl, rho)
		if next == lat {
			break
		}
		lat = next
	}
	sl, cl := math.Sincos(lat)
	n := A / math.Sqrt(1-E2*sl*sl)
	// Height along the normal: projection of the point minus the foot point.
	h := rho*cl + z*sl - n*(1-E2*sl*sl)
	return Geodetic{lat / deg, lon, h}
}
