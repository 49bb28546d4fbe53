#!/bin/sh
# Regenerates the WGS-84 fixtures of package geo with Debian's PROJ tools:
#   apt-get install -y proj-bin
#   sh gen_proj_fixtures.sh        (run from this directory)
# Written with proj-bin 9.1.1-1+b1 (`dpkg -s proj-bin`); the version found
# is recorded in the first line of every fixture.
#
# proj_cart.txt  geodetic -> ECEF with +proj=cart +ellps=WGS84
# proj_inv.txt   ECEF -> geodetic with the inverse of the same operation
# proj_enu.txt   geodetic -> local ENU with +proj=cart then +proj=topocentric
set -eu
ver=$(dpkg -s proj-bin 2>/dev/null | sed -n 's/^Version: //p')
[ -n "$ver" ] || { echo "proj-bin is not installed" >&2; exit 1; }
cart='+proj=cart +ellps=WGS84'
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT

# Forward: a grid of latitudes, longitudes and heights (poles, equator,
# antimeridian, below the ellipsoid, low orbit, geostationary height).
for lat in -90 -89.9999 -75.3 -45 -10.5 0 0.0001 33.3 52.84 89.5 90; do
	for lon in -180 -122.3 -0.5 0 13.7 93.75 179.99; do
		for h in -6000 -100 0 278.16 8848 400000 35786000; do
			echo "$lat $lon $h"
		done
	done
done >"$tmp/llh"
awk '{print $2, $1, $3}' "$tmp/llh" | cct -d 10 $cart | awk '{print $1, $2, $3}' >"$tmp/xyz"
{
	echo "# proj-bin $ver: cct -d 10 $cart"
	echo "# lat_deg lon_deg h_m x_m y_m z_m"
	paste -d ' ' "$tmp/llh" "$tmp/xyz"
} >proj_cart.txt

# Inverse: ECEF points laid out independently of any geodetic grid, by
# geocentric direction and radius, plus points on and near the polar axis
# and one inside the evolute on the equatorial plane.
awk 'BEGIN {
	pi = atan2(0, -1)
	split("6300000 6356000 6371000 6378000 6500000 7000000 26560000 42164000", r, " ")
	for (i = 1; i <= 8; i++)
		for (glat = -87; glat <= 87; glat += 29)
			for (glon = -170; glon <= 180; glon += 50) {
				a = glat * pi / 180; b = glon * pi / 180
				printf "%.4f %.4f %.4f\n", r[i]*cos(a)*cos(b), r[i]*cos(a)*sin(b), r[i]*sin(a)
			}
	printf "0 0 6356752.3142\n0 0 -6360000\n0.001 0 6400000\n1 1 -6356000\n100000 0 0\n"
}' >"$tmp/xyz2"
cct -I -d 10 $cart <"$tmp/xyz2" | awk '{print $2, $1, $3}' >"$tmp/llh2"
{
	echo "# proj-bin $ver: cct -I -d 10 $cart"
	echo "# x_m y_m z_m lat_deg lon_deg h_m"
	paste -d ' ' "$tmp/xyz2" "$tmp/llh2"
} >proj_inv.txt

# ENU about four origins; points offset from each by up to ~50 km.
{
	echo "# proj-bin $ver: cct -d 10 +proj=pipeline +step $cart +step +proj=topocentric +ellps=WGS84 +lat_0 +lon_0 +h_0"
	echo "# lat0 lon0 h0 lat lon h e_m n_m u_m"
	for o in "52.84 5.71 45.8" "41.5750 -93.7506 246.7" "-27.2107 153.0520 46.2" "89.9 -30 0"; do
		set -- $o
		for d in "0 0 0" "0.001 0 0" "0 0.001 0" "0 0 10" "-0.0123 0.0456 -30" "-0.3 -0.4 120" "0.05 0.45 1500"; do
			echo "$1 $2 $3 $d"
		done | awk '{ printf "%s %s %s %.7f %.7f %.3f\n", $1, $2, $3, $1 + $4, $2 + $5, $3 + $6 }' >"$tmp/in"
		awk '{print $5, $4, $6}' "$tmp/in" |
			cct -d 10 +proj=pipeline +step $cart +step +proj=topocentric +ellps=WGS84 +lat_0=$1 +lon_0=$2 +h_0=$3 |
			awk '{print $1, $2, $3}' >"$tmp/enu"
		paste -d ' ' "$tmp/in" "$tmp/enu"
	done
} >proj_enu.txt
