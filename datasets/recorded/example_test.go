package recorded_test

import (
	"fmt"
	"path/filepath"

	"github.com/estbench/estbench/datasets"
	"github.com/estbench/estbench/datasets/recorded"
)

// Load a sequence in the ASL layout (a constructed sample), look at its
// columns and turn it into the Sequence benchmark problems use: gyro as
// the measurement, the ground-truth orientation as the state.
func ExampleLoadASL() {
	rec, err := recorded.LoadASL(filepath.Join("testdata", "asl", "MH_constructed"))
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(rec.Meta.Sequence, rec.Meta.Start.Format("2006-01-02T15:04:05.000000000Z"), rec.Len(), "rows")
	for _, st := range rec.Stats()[:1] {
		fmt.Printf("%s: %d samples, %.1f Hz\n", st.Name, st.Samples, st.MeanRate)
	}
	var seq datasets.Sequence
	err = rec.SequenceTo(&seq, []string{"gyro_x", "gyro_y", "gyro_z"},
		[]string{"true_quat_w", "true_quat_x", "true_quat_y", "true_quat_z"})
	fmt.Println(err, seq.Steps, "steps; step 4 has a measurement:", seq.Meas(4) != nil)
	// Output:
	// MH_constructed 2023-11-14T22:13:20.000000128Z 7 rows
	// gyro_x: 5 samples, 200.0 Hz
	// <nil> 6 steps; step 4 has a measurement: false
}
