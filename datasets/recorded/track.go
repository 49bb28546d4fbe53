package recorded

import (
	"errors"
	"math"
	"regexp"
	"sort"
	"strconv"

	"github.com/estbench/estbench/datasets/navlog"
)

// FromTrack converts a navigation track into a recording of measured
// columns: lat, lon (degrees, frame "wgs84"), alt (m above mean sea
// level, frame "msl"), pos_x, pos_y, pos_z (east, north, up in metres)
// and vel_x, vel_y (east and north velocity from speed and course, m/s)
// in the local frame "enu@LAT,LON,H" about the first point, then sog
// (m/s), cog and heading (degrees from true north, frame "true-north")
// and horiz_std (m). Columns the track never fills are left out. Points
// are sorted by time; a point at the same time as an earlier one is
// dropped and counted in Meta.Skipped. Start is the first point's time;
// the sequence id is the track's ID, with its part when it has several.
// sensor names the source of the fixes ("gnss", "ais").
func FromTrack(tr navlog.Track, dataset, sensor string) (*Recording, error) {
	if len(tr.Points) == 0 {
		return nil, errors.New("recorded: track " + tr.ID + " has no points")
	}
	for i, p := range tr.Points {
		if p.T.IsZero() {
			return nil, &LoadError{File: tr.Source, Field: "time", Msg: "track " + tr.ID + ": point " + strconv.Itoa(i+1) + " has no time"}
		}
	}
	pts := make([]navlog.Point, len(tr.Points))
	copy(pts, tr.Points)
	sort.SliceStable(pts, func(i, j int) bool { return pts[i].T.Before(pts[j].T) })
	w, dups := 0, 0
	for _, p := range pts {
		if w > 0 && p.T.Equal(pts[w-1].T) {
			dups++
			continue
		}
		pts[w] = p
		w++
	}
	pts = pts[:w]
	sorted := navlog.Track{Source: tr.Source, ID: tr.ID, Part: tr.Part, Name: tr.Name, Points: pts}
	local, frame := sorted.ToENU(nil)
	o := frame.Origin()
	enu := "enu@" + fmtFloat(o.Lat) + "," + fmtFloat(o.Lon) + "," + fmtFloat(o.H)

	n := len(pts)
	t0 := pts[0].T
	rec := &Recording{T: make([]float64, n)}
	for i, p := range pts {
		rec.T[i] = float64(p.T.Sub(t0)) / 1e9
	}
	add := func(name, unit, frame string, get func(i int) float64) {
		c := Column{Name: name, Unit: unit, Frame: frame, Values: make([]float64, n)}
		any := false
		for i := range c.Values {
			v := get(i)
			c.Values[i] = v
			any = any || !math.IsNaN(v)
		}
		if any {
			c.Valid = nanBitmap(c.Values)
			rec.Columns = append(rec.Columns, c)
		}
	}
	add("lat", "deg", "wgs84", func(i int) float64 { return pts[i].Lat })
	add("lon", "deg", "wgs84", func(i int) float64 { return pts[i].Lon })
	add("alt", "m", "msl", func(i int) float64 { return pts[i].Alt })
	add("pos_x", "m", enu, func(i int) float64 { return local[i].E })
	add("pos_y", "m", enu, func(i int) float64 { return local[i].N })
	add("pos_z", "m", enu, func(i int) float64 { return local[i].U })
	add("vel_x", "m/s", enu, func(i int) float64 { return local[i].VE })
	add("vel_y", "m/s", enu, func(i int) float64 { return local[i].VN })
	add("sog", "m/s", "true-north", func(i int) float64 { return pts[i].SOG })
	add("cog", "deg", "true-north", func(i int) float64 { return pts[i].COG })
	add("heading", "deg", "true-north", func(i int) float64 { return pts[i].Heading })
	add("horiz_std", "m", "wgs84", func(i int) float64 { return pts[i].HorizStd })

	seq := tr.ID
	if tr.Part > 1 {
		seq += "-part" + strconv.Itoa(tr.Part)
	}
	rec.Meta = Meta{Dataset: dataset, Sequence: seq, Source: tr.Source, Start: t0.UTC()}
	if tr.Name != "" {
		rec.Meta.Source += " (" + tr.Name + ")"
	}
	s := Sensor{Name: sensor, Samples: n}
	if n >= 2 && rec.T[n-1] > 0 {
		s.RateHz = float64(n-1) / rec.T[n-1]
	}
	for _, c := range rec.Columns {
		s.Columns = append(s.Columns, c.Name)
	}
	rec.Meta.Sensors = []Sensor{s}
	if dups > 0 {
		rec.Meta.Skipped = map[string]int{"points at a repeated time": dups}
	}
	if err := rec.Validate(); err != nil {
		return nil, &LoadError{File: tr.Source, Msg: "track " + tr.ID + ": " + err.Error()}
	}
	return rec, nil
}

func fmtFloat(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

var unsafeName = regexp.MustCompile(`[^A-Za-z0-9._-]+`)

// FileName returns a file name for a recording: its sequence id with
// characters other than letters, digits, '.', '_' and '-' replaced by
// '_', and ".arrow".
func FileName(r *Recording) string {
	s := unsafeName.ReplaceAllString(r.Meta.Sequence, "_")
	if s == "" || s == "." || s == ".." {
		s = "sequence"
	}
	return s + ".arrow"
}
