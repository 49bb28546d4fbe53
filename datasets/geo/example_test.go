package geo_test

import (
	"fmt"

	"github.com/estbench/estbench/datasets/geo"
)

// A survey drone 100 m north-east of its launch point and 30 m up, seen
// in the launch point's local frames; its attitude turns a body vector.
// Hand check: 70.71 m is 0.000635° of latitude (meridian radius
// 6376.05 km) and 0.001049° of longitude (N cos φ = 3861.2 km); the
// height grows by the 30 m up.
func ExampleFrame() {
	launch := geo.Geodetic{Lat: 52.84, Lon: 5.71, H: 45}
	f := geo.NewFrame(launch)
	drone := f.FromENU(geo.Vec3{70.71, 70.71, 30})
	fmt.Printf("%.6f %.6f %.2f\n", drone.Lat, drone.Lon, drone.H)
	ned := f.NED(drone)
	fmt.Printf("NED %.2f %.2f %.2f\n", ned[0], ned[1], ned[2])

	// Heading 90° (east) in NED axes: the nose, body x, points east.
	q := geo.QuatFromEulerZYX(90*3.141592653589793/180, 0, 0)
	nose := q.Rotate(geo.Vec3{1, 0, 0})
	fmt.Printf("nose %.3f %.3f %.3f\n", nose[0], nose[1], nose[2])
	// Output:
	// 52.840635 5.711049 75.00
	// NED 70.71 70.71 -30.00
	// nose 0.000 1.000 0.000
}
