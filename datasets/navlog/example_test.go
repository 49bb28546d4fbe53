package navlog_test

import (
	"fmt"
	"strings"

	"github.com/estbench/estbench/datasets/navlog"
)

// A harbour launch logged by its receiver for two seconds, read into a
// track and placed in the local frame about its first fix. The
// 0.0081 minute of longitude at 51°50′N is 9.31 m (N cos φ · Δλ with
// N ≈ 6391 km), as a hand check of the east offset.
func ExampleReadNMEATrack() {
	log := `$GPRMC,101500.00,A,5150.0000,N,00400.0000,E,10.0,090.0,120621,,,A*60
$GPGGA,101500.00,5150.0000,N,00400.0000,E,1,09,0.9,2.0,M,45.0,M,,*6F
$GPRMC,101501.00,A,5150.0000,N,00400.0081,E,10.0,090.0,120621,,,A*68
$GPGGA,101501.00,5150.0000,N,00400.0081,E,1,09,0.9,2.0,M,45.0,M,,*67
`
	tr, r := navlog.ReadNMEATrack(strings.NewReader(log), "launch.nmea", navlog.NMEAConfig{})
	local, _ := tr.ToENU(nil)
	for i, p := range local {
		fmt.Printf("%s  E %6.2f m  N %5.2f m  VE %.3f m/s\n", tr.Points[i].T.Format("15:04:05"), p.E, p.N, p.VE)
	}
	fmt.Println(r.NumIssues(), "issues")
	// Output:
	// 10:15:00  E   0.00 m  N  0.00 m  VE 5.144 m/s
	// 10:15:01  E   9.31 m  N  0.00 m  VE 5.144 m/s
	// 0 issues
}
