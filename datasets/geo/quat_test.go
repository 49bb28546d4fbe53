package geo

import (
	"math"
	"testing"
)

func near3(a, b Vec3, tol float64) bool {
	for i := range 3 {
		if math.Abs(a[i]-b[i]) > tol {
			return false
		}
	}
	return true
}

// Hamilton's defining relations i² = j² = k² = ijk = -1 (Hamilton 1843),
// hence ij = k, jk = i, ki = j and ji = -k.
func TestHamiltonProduct(t *testing.T) {
	i, j, k := Quat{X: 1}, Quat{Y: 1}, Quat{Z: 1}
	cases := []struct {
		name      string
		got, want Quat
	}{
		{"ii", i.Mul(i), Quat{W: -1}},
		{"jj", j.Mul(j), Quat{W: -1}},
		{"kk", k.Mul(k), Quat{W: -1}},
		{"ijk", i.Mul(j).Mul(k), Quat{W: -1}},
		{"ij", i.Mul(j), k},
		{"jk", j.Mul(k), i},
		{"ki", k.Mul(i), j},
		{"ji", j.Mul(i), Quat{Z: -1}},
	}
	for _, c := range cases {
		if c.got != c.want {
			t.Errorf("%s = %v, want %v", c.name, c.got, c.want)
		}
	}
}

// Hand-computed active rotations (right-hand rule): +90° about z takes x
// to y and y to -x; +90° about x takes y to z; 120° about (1,1,1) is the
// cyclic permutation x -> y -> z -> x, with quaternion (1/2)(1, 1, 1, 1)
// since cos 60° = 1/2 and sin 60°/√3 = 1/2.
func TestRotateHandComputed(t *testing.T) {
	s := math.Sqrt(0.5)
	cases := []struct {
		name string
		q    Quat
		v    Vec3
		want Vec3
	}{
		{"z90 x", QuatFromAxisAngle(Vec3{0, 0, 1}, math.Pi/2), Vec3{1, 0, 0}, Vec3{0, 1, 0}},
		{"z90 y", QuatFromAxisAngle(Vec3{0, 0, 1}, math.Pi/2), Vec3{0, 1, 0}, Vec3{-1, 0, 0}},
		{"z90 z", QuatFromAxisAngle(Vec3{0, 0, 1}, math.Pi/2), Vec3{0, 0, 1}, Vec3{0, 0, 1}},
		{"x90 y", QuatFromAxisAngle(Vec3{2, 0, 0}, math.Pi/2), Vec3{0, 1, 0}, Vec3{0, 0, 1}},
		{"y90 z", QuatFromAxisAngle(Vec3{0, 1, 0}, math.Pi/2), Vec3{0, 0, 1}, Vec3{1, 0, 0}},
		{"x180 y", Quat{X: 1}, Vec3{0, 1, 0}, Vec3{0, -1, 0}},
		{"111 x", Quat{0.5, 0.5, 0.5, 0.5}, Vec3{1, 0, 0}, Vec3{0, 1, 0}},
		{"111 y", Quat{0.5, 0.5, 0.5, 0.5}, Vec3{0, 1, 0}, Vec3{0, 0, 1}},
		{"111 v", Quat{0.5, 0.5, 0.5, 0.5}, Vec3{3, -2, 5}, Vec3{5, 3, -2}},
		{"z90 from scalar-last", QuatFromScalarLast([4]float64{0, 0, s, s}), Vec3{1, 0, 0}, Vec3{0, 1, 0}},
		{"z90 from scalar-first", QuatFromScalarFirst([4]float64{s, 0, 0, s}), Vec3{1, 0, 0}, Vec3{0, 1, 0}},
	}
	for _, c := range cases {
		if got := c.q.Rotate(c.v); !near3(got, c.want, 1e-15) {
			t.Errorf("%s: Rotate = %v, want %v", c.name, got, c.want)
		}
		m := c.q.Matrix()
		got := Vec3{
			m[0]*c.v[0] + m[1]*c.v[1] + m[2]*c.v[2],
			m[3]*c.v[0] + m[4]*c.v[1] + m[5]*c.v[2],
			m[6]*c.v[0] + m[7]*c.v[1] + m[8]*c.v[2],
		}
		if !near3(got, c.want, 1e-15) {
			t.Errorf("%s: Matrix·v = %v, want %v", c.name, got, c.want)
		}
		// The sandwich product q ⊗ (0, v) ⊗ q* written out.
		p := c.q.Mul(Quat{0, c.v[0], c.v[1], c.v[2]}).Mul(c.q.Conj())
		if math.Abs(p.W) > 1e-15 || !near3(Vec3{p.X, p.Y, p.Z}, c.want, 1e-15) {
			t.Errorf("%s: q v q* = %v, want %v", c.name, p, c.want)
		}
	}
}

func TestScalarOrders(t *testing.T) {
	q := Quat{0.1, 0.2, 0.3, 0.4}
	if got := q.ScalarLast(); got != [4]float64{0.2, 0.3, 0.4, 0.1} {
		t.Errorf("ScalarLast = %v", got)
	}
	if got := QuatFromScalarLast(q.ScalarLast()); got != q {
		t.Errorf("scalar-last round trip = %v", got)
	}
	if got := QuatFromScalarFirst(q.ScalarFirst()); got != q {
		t.Errorf("scalar-first round trip = %v", got)
	}
}

// The hand-computed matrix of the 120° rotation about (1,1,1): the
// columns are the images of the axes, x -> y, y -> z, z -> x.
func TestMatrixHandComputed(t *testing.T) {
	want := [9]float64{
		0, 0, 1,
		1, 0, 0,
		0, 1, 0,
	}
	if got := (Quat{0.5, 0.5, 0.5, 0.5}).Matrix(); got != want {
		t.Errorf("Matrix = %v, want %v", got, want)
	}
}

// Each branch of Shepperd's method: near identity (trace largest) and
// 180° turns about x, y and z (each diagonal entry largest in turn), plus
// general rotations; the result must equal q up to sign, with W >= 0.
func TestQuatFromMatrix(t *testing.T) {
	qs := []Quat{
		Identity,
		QuatFromAxisAngle(Vec3{1, 2, 3}, 0.3),
		{X: 1}, {Y: 1}, {Z: 1},
		QuatFromAxisAngle(Vec3{1, 0.1, 0}, 3),
		QuatFromAxisAngle(Vec3{0.1, 1, -0.2}, -3),
		QuatFromAxisAngle(Vec3{0, -0.3, 1}, 3.1),
		QuatFromEulerZYX(2.5, -0.7, 1.9),
	}
	for _, q := range qs {
		got := QuatFromMatrix(q.Matrix())
		if q.W < 0 {
			q = Quat{-q.W, -q.X, -q.Y, -q.Z}
		}
		if got.W < 0 || math.Abs(got.W-q.W) > 1e-15 || math.Abs(got.X-q.X) > 1e-15 ||
			math.Abs(got.Y-q.Y) > 1e-15 || math.Abs(got.Z-q.Z) > 1e-15 {
			t.Errorf("QuatFromMatrix(%v.Matrix()) = %v", q, got)
		}
	}
	// The matrix R = diag(1, -1, -1) is the half turn about x: q = i.
	if got := QuatFromMatrix([9]float64{1, 0, 0, 0, -1, 0, 0, 0, -1}); got != (Quat{X: 1}) {
		t.Errorf("half turn about x: %v", got)
	}
}

// Euler ZYX in NED axes, hand-computed: yaw 90° points the body's nose
// (x) east; pitch 30° nose up points it north and up, (cos 30°, 0,
// -sin 30°) in NED; roll 90° puts the right wing (y) down; yaw 90° then
// pitch 30° gives (0, cos 30°, -sin 30°).
func TestEulerHandComputed(t *testing.T) {
	c30, s30 := math.Sqrt(3)/2, 0.5
	d := math.Pi / 180
	cases := []struct {
		name             string
		yaw, pitch, roll float64
		v, want          Vec3
	}{
		{"yaw 90 nose", 90 * d, 0, 0, Vec3{1, 0, 0}, Vec3{0, 1, 0}},
		{"pitch 30 nose", 0, 30 * d, 0, Vec3{1, 0, 0}, Vec3{c30, 0, -s30}},
		{"roll 90 wing", 0, 0, 90 * d, Vec3{0, 1, 0}, Vec3{0, 0, 1}},
		{"yaw 90 pitch 30 nose", 90 * d, 30 * d, 0, Vec3{1, 0, 0}, Vec3{0, c30, -s30}},
		{"yaw 90 roll 90 wing", 90 * d, 0, 90 * d, Vec3{0, 1, 0}, Vec3{0, 0, 1}},
		{"yaw 90 roll 90 belly", 90 * d, 0, 90 * d, Vec3{0, 0, 1}, Vec3{1, 0, 0}},
	}
	for _, c := range cases {
		q := QuatFromEulerZYX(c.yaw, c.pitch, c.roll)
		if got := q.Rotate(c.v); !near3(got, c.want, 1e-15) {
			t.Errorf("%s: %v, want %v", c.name, got, c.want)
		}
		y, p, r := q.EulerZYX()
		if math.Abs(y-c.yaw) > 1e-14 || math.Abs(p-c.pitch) > 1e-14 || math.Abs(r-c.roll) > 1e-14 {
			t.Errorf("%s: EulerZYX = %v %v %v", c.name, y, p, r)
		}
	}
}

// QuatFromEulerZYX is the product of the three elementary rotations in
// the order z, y, x; EulerZYX inverts it away from gimbal lock.
func TestEulerComposition(t *testing.T) {
	for _, e := range [][3]float64{{0.3, 0.2, 0.1}, {-3, 1.2, -2.9}, {2, -1.5, 0.5}, {-0.5, 0, 3.1}} {
		q := QuatFromEulerZYX(e[0], e[1], e[2])
		p := QuatFromAxisAngle(Vec3{0, 0, 1}, e[0]).Mul(QuatFromAxisAngle(Vec3{0, 1, 0}, e[1])).Mul(QuatFromAxisAngle(Vec3{1, 0, 0}, e[2]))
		if math.Abs(q.W-p.W)+math.Abs(q.X-p.X)+math.Abs(q.Y-p.Y)+math.Abs(q.Z-p.Z) > 1e-15*4 {
			t.Errorf("%v: %v, product %v", e, q, p)
		}
		y, pt, r := q.EulerZYX()
		if math.Abs(y-e[0]) > 1e-12 || math.Abs(pt-e[1]) > 1e-12 || math.Abs(r-e[2]) > 1e-12 {
			t.Errorf("%v: EulerZYX = %v %v %v", e, y, pt, r)
		}
	}
}

// At pitch +90° only yaw - roll is determined; at -90° only yaw + roll.
func TestEulerGimbalLock(t *testing.T) {
	for _, c := range []struct{ yaw, pitch, roll, wantYaw float64 }{
		{0.7, math.Pi / 2, 0.2, 0.5},
		{0.7, -math.Pi / 2, 0.2, 0.9},
	} {
		y, p, r := QuatFromEulerZYX(c.yaw, c.pitch, c.roll).EulerZYX()
		if math.Abs(y-c.wantYaw) > 1e-7 || p != c.pitch || r != 0 {
			t.Errorf("%v: got %v %v %v", c, y, p, r)
		}
	}
}

func TestQuatNoAllocs(t *testing.T) {
	q := QuatFromEulerZYX(0.1, 0.2, 0.3)
	var v Vec3
	n := testing.AllocsPerRun(100, func() {
		v = QuatFromMatrix(q.Mul(q).Matrix()).Rotate(Vec3{1, 2, 3})
	})
	if n != 0 {
		t.Errorf("%v allocations", n)
	}
	_ = v
}
