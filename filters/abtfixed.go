package filters

// abt's product for a fixed inner length k, one function per k in 3..6
// (the state dimensions of most problems), the same kernel written out for
// each: the dot products are unrolled into one expression, summed left to
// right as the loop of abtUpper sums them, so the results are the same;
// the fixed-size array views need no bounds checks. Rows of a are taken two
// at a time and columns of dst two at a time.

// abtK3 is abtUpper for k = 3.
func abtK3(dst, a, b []float64, m, n int, sym bool) {
	a, b = a[:m*3], b[:n*3]
	i := 0
	for ; i+2 <= m; i += 2 {
		a0 := (*[3]float64)(a[i*3:])
		a1 := (*[3]float64)(a[i*3+3:])
		r0 := dst[i*n : i*n+n]
		r1 := dst[(i+1)*n:][:len(r0)]
		j := 0
		if sym { // entry (i, i) alone; both rows then start at i+1
			b0 := (*[3]float64)(b[i*3:])
			r0[i] = a0[0]*b0[0] + a0[1]*b0[1] + a0[2]*b0[2]
			j = i + 1
		}
		for ; j+2 <= len(r0); j += 2 {
			b0 := (*[3]float64)(b[j*3:])
			b1 := (*[3]float64)(b[j*3+3:])
			r0[j] = a0[0]*b0[0] + a0[1]*b0[1] + a0[2]*b0[2]
			r0[j+1] = a0[0]*b1[0] + a0[1]*b1[1] + a0[2]*b1[2]
			r1[j] = a1[0]*b0[0] + a1[1]*b0[1] + a1[2]*b0[2]
			r1[j+1] = a1[0]*b1[0] + a1[1]*b1[1] + a1[2]*b1[2]
		}
		for ; j < len(r0); j++ {
			b0 := (*[3]float64)(b[j*3:])
			r0[j] = a0[0]*b0[0] + a0[1]*b0[1] + a0[2]*b0[2]
			r1[j] = a1[0]*b0[0] + a1[1]*b0[1] + a1[2]*b0[2]
		}
	}
	for ; i < m; i++ {
		a0 := (*[3]float64)(a[i*3:])
		r0 := dst[i*n : i*n+n]
		j := 0
		if sym {
			j = i
		}
		for ; j < len(r0); j++ {
			b0 := (*[3]float64)(b[j*3:])
			r0[j] = a0[0]*b0[0] + a0[1]*b0[1] + a0[2]*b0[2]
		}
	}
}

// abtK4 is abtUpper for k = 4.
func abtK4(dst, a, b []float64, m, n int, sym bool) {
	a, b = a[:m*4], b[:n*4]
	i := 0
	for ; i+2 <= m; i += 2 {
		a0 := (*[4]float64)(a[i*4:])
		a1 := (*[4]float64)(a[i*4+4:])
		r0 := dst[i*n : i*n+n]
		r1 := dst[(i+1)*n:][:len(r0)]
		j := 0
		if sym { // entry (i, i) alone; both rows then start at i+1
			b0 := (*[4]float64)(b[i*4:])
			r0[i] = a0[0]*b0[0] + a0[1]*b0[1] + a0[2]*b0[2] + a0[3]*b0[3]
			j = i + 1
		}
		for ; j+2 <= len(r0); j += 2 {
			b0 := (*[4]float64)(b[j*4:])
			b1 := (*[4]float64)(b[j*4+4:])
			r0[j] = a0[0]*b0[0] + a0[1]*b0[1] + a0[2]*b0[2] + a0[3]*b0[3]
			r0[j+1] = a0[0]*b1[0] + a0[1]*b1[1] + a0[2]*b1[2] + a0[3]*b1[3]
			r1[j] = a1[0]*b0[0] + a1[1]*b0[1] + a1[2]*b0[2] + a1[3]*b0[3]
			r1[j+1] = a1[0]*b1[0] + a1[1]*b1[1] + a1[2]*b1[2] + a1[3]*b1[3]
		}
		for ; j < len(r0); j++ {
			b0 := (*[4]float64)(b[j*4:])
			r0[j] = a0[0]*b0[0] + a0[1]*b0[1] + a0[2]*b0[2] + a0[3]*b0[3]
			r1[j] = a1[0]*b0[0] + a1[1]*b0[1] + a1[2]*b0[2] + a1[3]*b0[3]
		}
	}
	for ; i < m; i++ {
		a0 := (*[4]float64)(a[i*4:])
		r0 := dst[i*n : i*n+n]
		j := 0
		if sym {
			j = i
		}
		for ; j < len(r0); j++ {
			b0 := (*[4]float64)(b[j*4:])
			r0[j] = a0[0]*b0[0] + a0[1]*b0[1] + a0[2]*b0[2] + a0[3]*b0[3]
		}
	}
}

// abtK5 is abtUpper for k = 5.
func abtK5(dst, a, b []float64, m, n int, sym bool) {
	a, b = a[:m*5], b[:n*5]
	i := 0
	for ; i+2 <= m; i += 2 {
		a0 := (*[5]float64)(a[i*5:])
		a1 := (*[5]float64)(a[i*5+5:])
		r0 := dst[i*n : i*n+n]
		r1 := dst[(i+1)*n:][:len(r0)]
		j := 0
		if sym { // entry (i, i) alone; both rows then start at i+1
			b0 := (*[5]float64)(b[i*5:])
			r0[i] = a0[0]*b0[0] + a0[1]*b0[1] + a0[2]*b0[2] + a0[3]*b0[3] + a0[4]*b0[4]
			j = i + 1
		}
		for ; j+2 <= len(r0); j += 2 {
			b0 := (*[5]float64)(b[j*5:])
			b1 := (*[5]float64)(b[j*5+5:])
			r0[j] = a0[0]*b0[0] + a0[1]*b0[1] + a0[2]*b0[2] + a0[3]*b0[3] + a0[4]*b0[4]
			r0[j+1] = a0[0]*b1[0] + a0[1]*b1[1] + a0[2]*b1[2] + a0[3]*b1[3] + a0[4]*b1[4]
			r1[j] = a1[0]*b0[0] + a1[1]*b0[1] + a1[2]*b0[2] + a1[3]*b0[3] + a1[4]*b0[4]
			r1[j+1] = a1[0]*b1[0] + a1[1]*b1[1] + a1[2]*b1[2] + a1[3]*b1[3] + a1[4]*b1[4]
		}
		for ; j < len(r0); j++ {
			b0 := (*[5]float64)(b[j*5:])
			r0[j] = a0[0]*b0[0] + a0[1]*b0[1] + a0[2]*b0[2] + a0[3]*b0[3] + a0[4]*b0[4]
			r1[j] = a1[0]*b0[0] + a1[1]*b0[1] + a1[2]*b0[2] + a1[3]*b0[3] + a1[4]*b0[4]
		}
	}
	for ; i < m; i++ {
		a0 := (*[5]float64)(a[i*5:])
		r0 := dst[i*n : i*n+n]
		j := 0
		if sym {
			j = i
		}
		for ; j < len(r0); j++ {
			b0 := (*[5]float64)(b[j*5:])
			r0[j] = a0[0]*b0[0] + a0[1]*b0[1] + a0[2]*b0[2] + a0[3]*b0[3] + a0[4]*b0[4]
		}
	}
}

// abtK6 is abtUpper for k = 6.
func abtK6(dst, a, b []float64, m, n int, sym bool) {
	a, b = a[:m*6], b[:n*6]
	i := 0
	for ; i+2 <= m; i += 2 {
		a0 := (*[6]float64)(a[i*6:])
		a1 := (*[6]float64)(a[i*6+6:])
		r0 := dst[i*n : i*n+n]
		r1 := dst[(i+1)*n:][:len(r0)]
		j := 0
		if sym { // entry (i, i) alone; both rows then start at i+1
			b0 := (*[6]float64)(b[i*6:])
			r0[i] = a0[0]*b0[0] + a0[1]*b0[1] + a0[2]*b0[2] + a0[3]*b0[3] + a0[4]*b0[4] + a0[5]*b0[5]
			j = i + 1
		}
		for ; j+2 <= len(r0); j += 2 {
			b0 := (*[6]float64)(b[j*6:])
			b1 := (*[6]float64)(b[j*6+6:])
			r0[j] = a0[0]*b0[0] + a0[1]*b0[1] + a0[2]*b0[2] + a0[3]*b0[3] + a0[4]*b0[4] + a0[5]*b0[5]
			r0[j+1] = a0[0]*b1[0] + a0[1]*b1[1] + a0[2]*b1[2] + a0[3]*b1[3] + a0[4]*b1[4] + a0[5]*b1[5]
			r1[j] = a1[0]*b0[0] + a1[1]*b0[1] + a1[2]*b0[2] + a1[3]*b0[3] + a1[4]*b0[4] + a1[5]*b0[5]
			r1[j+1] = a1[0]*b1[0] + a1[1]*b1[1] + a1[2]*b1[2] + a1[3]*b1[3] + a1[4]*b1[4] + a1[5]*b1[5]
		}
		for ; j < len(r0); j++ {
			b0 := (*[6]float64)(b[j*6:])
			r0[j] = a0[0]*b0[0] + a0[1]*b0[1] + a0[2]*b0[2] + a0[3]*b0[3] + a0[4]*b0[4] + a0[5]*b0[5]
			r1[j] = a1[0]*b0[0] + a1[1]*b0[1] + a1[2]*b0[2] + a1[3]*b0[3] + a1[4]*b0[4] + a1[5]*b0[5]
		}
	}
	for ; i < m; i++ {
		a0 := (*[6]float64)(a[i*6:])
		r0 := dst[i*n : i*n+n]
		j := 0
		if sym {
			j = i
		}
		for ; j < len(r0); j++ {
			b0 := (*[6]float64)(b[j*6:])
			r0[j] = a0[0]*b0[0] + a0[1]*b0[1] + a0[2]*b0[2] + a0[3]*b0[3] + a0[4]*b0[4] + a0[5]*b0[5]
		}
	}
}
