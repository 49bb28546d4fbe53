package geo

import "math"

// Quat is a Hamilton quaternion w + xi + yj + zk stored scalar first. A
// unit Quat is the active rotation taking body-frame vectors into the
// navigation frame: v_nav = q ⊗ v_body ⊗ q*.
type Quat struct {
	W, X, Y, Z float64
}

// Identity is the rotation that leaves every vector unchanged.
var Identity = Quat{W: 1}

// QuatFromScalarFirst reads a quaternion stored [w x y z].
func QuatFromScalarFirst(v [4]float64) Quat { return Quat{v[0], v[1], v[2], v[3]} }

// QuatFromScalarLast reads a quaternion stored [x y z w], as some sensors
// and libraries store it. The rotation convention (Hamilton, active,
// body to navigation) must already match; only the order changes.
func QuatFromScalarLast(v [4]float64) Quat { return Quat{v[3], v[0], v[1], v[2]} }

// ScalarFirst returns q as [w x y z].
func (q Quat) ScalarFirst() [4]float64 { return [4]float64{q.W, q.X, q.Y, q.Z} }

// ScalarLast returns q as [x y z w].
func (q Quat) ScalarLast() [4]float64 { return [4]float64{q.X, q.Y, q.Z, q.W} }

// QuatFromAxisAngle returns the rotation by angle radians about axis
// (right-hand rule); axis need not be unit length but must not be zero.
func QuatFromAxisAngle(axis Vec3, angle float64) Quat {
	n := math.Sqrt(axis[0]*axis[0] + axis[1]*axis[1] + axis[2]*axis[2])
	s, c := math.Sincos(angle / 2)
	s /= n
	return Quat{c, s * axis[0], s * axis[1], s * axis[2]}
}

// Mul returns the Hamilton product q ⊗ p: the rotation p followed by q.
func (q Quat) Mul(p Quat) Quat {
	return Quat{
		q.W*p.W - q.X*p.X - q.Y*p.Y - q.Z*p.Z,
		q.W*p.X + q.X*p.W + q.Y*p.Z - q.Z*p.Y,
		q.W*p.Y - q.X*p.Z + q.Y*p.W + q.Z*p.X,
		q.W*p.Z + q.X*p.Y - q.Y*p.X + q.Z*p.W,
	}
}

// Conj returns the conjugate w - xi - yj - zk, the inverse rotation of a
// unit quaternion.
func (q Quat) Conj() Quat { return Quat{q.W, -q.X, -q.Y, -q.Z} }

// Norm returns the Euclidean norm of q.
func (q Quat) Norm() float64 {
	return math.Sqrt(q.W*q.W + q.X*q.X + q.Y*q.Y + q.Z*q.Z)
}

// Normalize returns q scaled to unit norm.
func (q Quat) Normalize() Quat {
	n := q.Norm()
	return Quat{q.W / n, q.X / n, q.Y / n, q.Z / n}
}

// Rotate returns q ⊗ v ⊗ q* for a unit q: v taken from the body frame into
// the navigation frame.
func (q Quat) Rotate(v Vec3) Vec3 {
	// t = 2 (u × v), v' = v + w t + u × t, with u the vector part.
	tx := 2 * (q.Y*v[2] - q.Z*v[1])
	ty := 2 * (q.Z*v[0] - q.X*v[2])
	tz := 2 * (q.X*v[1] - q.Y*v[0])
	return Vec3{
		v[0] + q.W*tx + q.Y*tz - q.Z*ty,
		v[1] + q.W*ty + q.Z*tx - q.X*tz,
		v[2] + q.W*tz + q.X*ty - q.Y*tx,
	}
}

// Matrix returns the row-major rotation matrix R of a unit q, with
// v_nav = R v_body: the Hamilton-convention matrix as in Solà (2017),
// "Quaternion kinematics for the error-state Kalman filter",
// arXiv:1711.02508, section 2 (from memory).
func (q Quat) Matrix() [9]float64 {
	w, x, y, z := q.W, q.X, q.Y, q.Z
	return [9]float64{
		1 - 2*(y*y+z*z), 2 * (x*y - w*z), 2 * (x*z + w*y),
		2 * (x*y + w*z), 1 - 2*(x*x+z*z), 2 * (y*z - w*x),
		2 * (x*z - w*y), 2 * (y*z + w*x), 1 - 2*(x*x+y*y),
	}
}

// QuatFromMatrix returns the unit quaternion, with W >= 0, of the
// row-major rotation matrix r, by the method of Shepperd (1978),
// "Quaternion from rotation matrix", Journal of Guidance and Control 1(3),
// 223-224 (from memory): the largest of 4w², 4x², 4y², 4z² is taken from
// the diagonal, the others from off-diagonal sums and differences.
func QuatFromMatrix(r [9]float64) Quat {
	tr := r[0] + r[4] + r[8]
	var q Quat
	switch {
	case tr >= r[0] && tr >= r[4] && tr >= r[8]:
		s := 2 * math.Sqrt(1+tr) // 4w
		q = Quat{s / 4, (r[7] - r[5]) / s, (r[2] - r[6]) / s, (r[3] - r[1]) / s}
	case r[0] >= r[4] && r[0] >= r[8]:
		s := 2 * math.Sqrt(1+r[0]-r[4]-r[8]) // 4x
		q = Quat{(r[7] - r[5]) / s, s / 4, (r[1] + r[3]) / s, (r[2] + r[6]) / s}
	case r[4] >= r[8]:
		s := 2 * math.Sqrt(1-r[0]+r[4]-r[8]) // 4y
		q = Quat{(r[2] - r[6]) / s, (r[1] + r[3]) / s, s / 4, (r[5] + r[7]) / s}
	default:
		s := 2 * math.Sqrt(1-r[0]-r[4]+r[8]) // 4z
		q = Quat{(r[3] - r[1]) / s, (r[2] + r[6]) / s, (r[5] + r[7]) / s, s / 4}
	}
	if q.W < 0 {
		q = Quat{-q.W, -q.X, -q.Y, -q.Z}
	}
	return q
}

// QuatFromEulerZYX returns the rotation Rz(yaw) · Ry(pitch) · Rx(roll):
// roll about body x first, then pitch about y, then yaw about z, all in
// radians. With NED navigation axes these are the usual aircraft and ship
// heading, pitch (nose up) and roll (starboard down).
func QuatFromEulerZYX(yaw, pitch, roll float64) Quat {
	sy, cy := math.Sincos(yaw / 2)
	sp, cp := math.Sincos(pitch / 2)
	sr, cr := math.Sincos(roll / 2)
	return Quat{
		cr*cp*cy + sr*sp*sy,
		sr*cp*cy - cr*sp*sy,
		cr*sp*cy + sr*cp*sy,
		cr*cp*sy - sr*sp*cy,
	}
}

// EulerZYX returns the yaw, pitch and roll (radians) of a unit q, with
// yaw and roll in (-π, π] and pitch in [-π/2, π/2]. At pitch ±π/2 (gimbal
// lock) only yaw - roll (pitch up) or yaw + roll (pitch down) is
// determined; roll is then returned as 0.
func (q Quat) EulerZYX() (yaw, pitch, roll float64) {
	r := q.Matrix()
	sp := -r[6]
	if sp >= 1-1e-12 || sp <= -1+1e-12 {
		pitch = math.Copysign(math.Pi/2, sp)
		// With roll = 0: R01 = -sin(yaw) and R11 = cos(yaw) for either sign.
		return math.Atan2(-r[1], r[4]), pitch, 0
	}
	return math.Atan2(r[3], r[0]), math.Asin(sp), math.Atan2(r[7], r[8])
}
