package navlog

import (
	"math"
	"time"

	"github.com/estbench/estbench/datasets/geo"
)

// Point is one position of a track; see the package doc for units.
type Point struct {
	T        time.Time // UTC; zero if the source gives no time
	Lat, Lon float64   // degrees
	Alt      float64   // metres above mean sea level; NaN if absent
	SOG      float64   // speed over ground, m/s; NaN if absent
	COG      float64   // course over ground, degrees from true north; NaN if absent
	Heading  float64   // true heading, degrees; NaN if absent
	HorizStd float64   // standard deviation of the horizontal position error per axis, metres; NaN if absent
}

// Track is one vessel's or one device's time-ordered points.
type Track struct {
	Source string // name of the input the track was read from
	ID     string // vessel MMSI, GPX track name or receiver talker
	Part   int    // 1-based piece of the ID's points after splitting at gaps or segments
	Name   string // vessel or track name when the source gives one
	Points []Point
}

// knot is one international knot in m/s.
const knot = 1852.0 / 3600

// LocalPoint is a track point in the local east-north-up frame about the
// track's first point.
type LocalPoint struct {
	T       float64 // seconds since the first point
	E, N, U float64 // metres; U is NaN where Alt is
	VE, VN  float64 // velocity east and north from SOG and COG, m/s; NaN if either is absent
}

// ToENU converts the track to local east-north-up coordinates about its
// first point (at that point's altitude, or 0 if it has none), reusing
// dst's storage when it is large enough, and returns the points and the
// frame. Points without altitude are placed at height 0 for E and N.
// Altitudes are above mean sea level, not the ellipsoid: over the few
// kilometres of a track the geoid separation is nearly constant, so U is
// height above the origin to well within GNSS height noise (common
// practice, no source). It panics if the track has no points.
func (tr *Track) ToENU(dst []LocalPoint) ([]LocalPoint, geo.Frame) {
	if len(tr.Points) == 0 {
		panic("navlog: ToENU of an empty track")
	}
	p0 := tr.Points[0]
	h0 := p0.Alt
	if math.IsNaN(h0) {
		h0 = 0
	}
	f := geo.NewFrame(geo.Geodetic{Lat: p0.Lat, Lon: p0.Lon, H: h0})
	dst = dst[:0]
	for i := range tr.Points {
		p := &tr.Points[i]
		h := p.Alt
		if math.IsNaN(h) {
			h = 0
		}
		e := f.ENU(geo.Geodetic{Lat: p.Lat, Lon: p.Lon, H: h})
		lp := LocalPoint{T: p.T.Sub(p0.T).Seconds(), E: e[0], N: e[1], U: e[2], VE: math.NaN(), VN: math.NaN()}
		if math.IsNaN(p.Alt) {
			lp.U = math.NaN()
		}
		if !math.IsNaN(p.SOG) && !math.IsNaN(p.COG) {
			s, c := math.Sincos(p.COG * math.Pi / 180)
			lp.VE, lp.VN = p.SOG*s, p.SOG*c
		}
		dst = append(dst, lp)
	}
	return dst, f
}

// SplitAtGaps appends to dst the pieces of tr between time gaps longer
// than gap, numbering them by Part from tr.Part; the pieces share tr's
// Points storage. The points must be in time order.
func SplitAtGaps(dst []Track, tr Track, gap time.Duration) []Track {
	part := max(tr.Part, 1)
	start := 0
	for i := 1; i <= len(tr.Points); i++ {
		if i < len(tr.Points) && tr.Points[i].T.Sub(tr.Points[i-1].T) <= gap {
			continue
		}
		piece := tr
		piece.Part = part
		piece.Points = tr.Points[start:i:i]
		dst = append(dst, piece)
		part++
		start = i
	}
	return dst
}
