// Package geo converts between WGS-84 geodetic coordinates, Earth-centred
// Earth-fixed (ECEF) Cartesian coordinates and local east-north-up (ENU) or
// north-east-down (NED) frames about a reference point, and holds a small
// unit quaternion type for attitudes.
//
// # Units
//
// Latitude and longitude are degrees (north and east positive), heights
// are metres above the WGS-84 ellipsoid, Cartesian coordinates are metres.
// Euler angles and rotation angles are radians.
//
// # Ellipsoid
//
// The WGS-84 defining parameters are those of NIMA TR8350.2, "Department
// of Defense World Geodetic System 1984, Its Definition and Relationships
// with Local Geodetic Systems", 3rd edition (2000), Table 3.1 (a and 1/f);
// the derived b and e² agree with its Table 3.3. The table numbers are
// given from memory.
//
// # Quaternions
//
// Quat is a Hamilton quaternion stored scalar first, [w x y z], and means
// the active rotation that carries body-frame vectors into the navigation
// frame: v_nav = q ⊗ v_body ⊗ q*. QuatFromScalarLast reads the [x y z w]
// order used by some sensors and libraries. Euler angles follow the ZYX
// (yaw, pitch, roll) sequence: R = Rz(yaw) · Ry(pitch) · Rx(roll).
//
// # Memory
//
// Everything works on values; nothing allocates.
package geo
