package filters_test

import (
	"fmt"
	"math"

	"github.com/estbench/estbench/filters"
)

// A local level model with equal noise variances: the predicted variance
// settles at the golden ratio (q + √(q² + 4qr))/2 = (1 + √5)/2.
func ExampleKF() {
	m := &filters.Model{
		Nx: 1, Nz: 1,
		F:      func(dst, x []float64, _ int) { dst[0] = x[0] },
		H:      func(dst, x []float64, _ int) { dst[0] = x[0] },
		Q:      []float64{1},
		R:      []float64{1},
		Linear: true,
	}
	f, err := filters.NewKF(m, filters.KFConfig{})
	if err != nil {
		panic(err)
	}
	if err := f.Reset([]float64{0}, []float64{100}, nil); err != nil {
		panic(err)
	}
	x, p := make([]float64, 1), make([]float64, 1)
	for k := 1; k <= 50; k++ {
		if err := f.Predict(k); err != nil {
			panic(err)
		}
		f.EstimateTo(x, p)
		if err := f.Update([]float64{0.5}, k); err != nil {
			panic(err)
		}
	}
	fmt.Printf("predicted variance %.6f\n", p[0])
	// Output: predicted variance 1.618034
}

// A shore radar at the origin reports range (m) and bearing (rad) of a
// harbour launch; a UKF with a nearly constant velocity model follows it.
func ExampleUKF() {
	const T = 1.0
	q := 0.1 // acceleration variance, m²/s⁴
	m := &filters.Model{
		Nx: 4, Nz: 2, // state [px, vx, py, vy]
		F: func(dst, x []float64, _ int) {
			dst[0], dst[1] = x[0]+T*x[1], x[1]
			dst[2], dst[3] = x[2]+T*x[3], x[3]
		},
		H: func(dst, x []float64, _ int) {
			dst[0] = math.Hypot(x[0], x[2])
			dst[1] = math.Atan2(x[2], x[0])
		},
		Q: []float64{
			q / 4, q / 2, 0, 0,
			q / 2, q, 0, 0,
			0, 0, q / 4, q / 2,
			0, 0, q / 2, q,
		},
		R:         []float64{4, 0, 0, 1e-6},
		AngleMeas: []int{1},
	}
	f, err := filters.NewUKF(m, filters.UKFConfig{})
	if err != nil {
		panic(err)
	}
	p0 := []float64{
		100, 0, 0, 0,
		0, 25, 0, 0,
		0, 0, 100, 0,
		0, 0, 0, 25,
	}
	if err := f.Reset([]float64{-800, 0, 10, 0}, p0, nil); err != nil {
		panic(err)
	}
	// The launch heads east at 4 m/s from (-800, 0): bearing stays at π.
	for k := 1; k <= 20; k++ {
		if err := f.Predict(k); err != nil {
			panic(err)
		}
		if err := f.Update([]float64{800 - 4*float64(k), math.Pi}, k); err != nil {
			panic(err)
		}
	}
	x := make([]float64, 4)
	f.EstimateTo(x, nil)
	fmt.Printf("east %.1f m at %.2f m/s; north offset under 5 cm: %v\n", x[0], x[1], math.Abs(x[2]) < 0.05)
	// Output: east -720.0 m at 4.00 m/s; north offset under 5 cm: true
}
