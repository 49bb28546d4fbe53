package navlog

import (
	"math"
	"slices"
)

func sortUint32(v []uint32) { slices.Sort(v) }

// sortPoints sorts points by time, keeping the input order of equal times.
func sortPoints(p []Point) []Point {
	slices.SortStableFunc(p, func(a, b Point) int { return a.T.Compare(b.T) })
	return p
}

// dropDuplicates removes points equal in every field (NaN equal to NaN)
// to an earlier point of the same time; p must be sorted by time.
func dropDuplicates(p []Point) []Point {
	out := p[:0]
	start := 0 // first kept point with the current time
	for _, q := range p {
		if len(out) > 0 && !out[len(out)-1].T.Equal(q.T) {
			start = len(out)
		}
		dup := false
		for j := start; j < len(out); j++ {
			if samePoint(&out[j], &q) {
				dup = true
				break
			}
		}
		if !dup {
			out = append(out, q)
		}
	}
	return out
}

func samePoint(a, b *Point) bool {
	return a.T.Equal(b.T) && same(a.Lat, b.Lat) && same(a.Lon, b.Lon) && same(a.Alt, b.Alt) &&
		same(a.SOG, b.SOG) && same(a.COG, b.COG) && same(a.Heading, b.Heading) && same(a.HorizStd, b.HorizStd)
}

func same(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) || (a != a && b != b) }
