package ecg

import "math"

// The fused pipeline: for the default chain shape (a Butterworth high-pass
// and two notches for conditioning, a Butterworth high-pass and low-pass for
// the detection band) a conditioning pass over each block runs the first
// three biquads with their states in registers, and one call-free loop runs
// the band-pass, the derivative, the squaring, the moving-window integrator
// and the merging of integrator peaks per sample, writing constant-length
// rings (no bounds checks). The decision logic runs only when a candidate
// is due, as in the general path.
//
// Arithmetic. The sections' coefficient symmetries save multiplications
// without changing a bit: a Butterworth section has b2 == b0 and b1 == -2 b0
// (high-pass) or b1 == 2 b0 (low-pass) exactly as designed, and a notch has
// b2 == b0, so b2*v is b0*v and b1*v is +/-(b0*v + b0*v) (doubling is exact
// in IEEE 754). fusedShape checks the symmetries on the actual coefficients;
// any other chain takes the general block path. The state update of each
// section is reassociated, z0 = (b1*v + z1) - a1*y instead of (b1*v - a1*y)
// + z1, which takes an addition off the recursive path; that changes the
// last bits of the filtered values (not the recursion: it is the same
// transposed direct form II), so beat times and amplitudes can differ from
// the general path in the last bits (on MIT-BIH record 100 and simulated
// signals at 128 to 1000 Hz the beat samples and search-back flags are the
// same). Streaming and batch still run this very code, so they agree bit for
// bit.

// fusedShape reports whether cs and bs have the shape runFused handles.
func fusedShape(cs, bs []sec) bool {
	if len(cs) != 3 || len(bs) != 2 {
		return false
	}
	hp := func(s sec) bool { return s.b2 == s.b0 && s.b1 == -2*s.b0 }
	lp := func(s sec) bool { return s.b2 == s.b0 && s.b1 == 2*s.b0 }
	sym := func(s sec) bool { return s.b2 == s.b0 }
	return hp(cs[0]) && sym(cs[1]) && sym(cs[2]) && hp(bs[0]) && lp(bs[1])
}

// fusedState is the per-sample state of the fused loop: the five biquad
// states, the last two integrator samples and the integrator sum (the
// band-passed history the derivative needs is in the ring).
type fusedState struct {
	pz0, pz1, qz0, qz1, rz0, rz1, uz0, uz1, wz0, wz1 float64
	m1, m2, sum                                      float64
}

// fusedCoef holds the coefficients runFused uses, with k8 = fs/8 (derivative
// scale) and inv = 1/intN.
type fusedCoef struct {
	pb0, pa1, pa2      float64
	qb0, qb1, qa1, qa2 float64
	rb0, rb1, ra1, ra2 float64
	ub0, ua1, ua2      float64
	wb0, wa1, wa2      float64
	k8, inv            float64
	intN               int
}

// ringFast is the ring-buffer length of the fused path: a constant, so the
// ring indices need no bounds checks. init uses it whenever the detector
// needs at most that many samples of history (the default options at every
// supported rate).
const ringFast = 1024

// runFused is runBlock for the fused chain shape (see above for how its
// numbers relate to the general path's). Per block of at most blockN
// samples, condPass runs the three conditioning sections (their states in
// registers) into blkC; then the call-free bandLoop runs the band-pass, derivative,
// squaring, integrator and peak merging until a sample needs the decision
// logic (when a pending peak or a search-back is due, or during learning),
// and that sample is finished here.
func (c *core) runFused(x []float64) {
	var st fusedState
	p, q, r, u, w := &c.cs[0], &c.cs[1], &c.cs[2], &c.bs[0], &c.bs[1]
	st.pz0, st.pz1, st.qz0, st.qz1, st.rz0, st.rz1 = p.z0, p.z1, q.z0, q.z1, r.z0, r.z1
	st.uz0, st.uz1, st.wz0, st.wz1 = u.z0, u.z1, w.z0, w.z1
	st.m1, st.m2, st.sum = c.m1, c.m2, c.sum
	cf := &c.fc
	cb := (*[ringFast]float64)(c.cbuf)
	fb := (*[ringFast]float64)(c.fbuf)
	db := (*[ringFast]float64)(c.dbuf)
	seg2 := c.seg + 2
	for len(x) > 0 {
		blk := x[:min(len(x), len(c.blkC))]
		x = x[len(blk):]
		bc := c.blkC[:len(blk)]
		condPass(&st, cf, blk, bc)
		for len(bc) > 0 {
			due := min(c.pendDue, c.sbDue)
			if !c.learned {
				due = c.n
			}
			k, mv := c.bandLoop(&st, bc, cb, fb, db, due)
			c.n += k
			bc = bc[k:]
			if mv < 0 {
				break // block done without an event
			}
			// The decision logic for sample n (its filters have run).
			n := c.n - 1
			if !c.learned {
				c.learnStep(n, mv, fb[n&(ringFast-1)])
			}
			if n >= c.pendDue {
				c.finalize(c.pk, c.pv)
				c.pending = false
				c.pendDue = math.MaxInt
			}
			m1, m2 := st.m1, st.m2
			if m1 > m2 && m1 >= mv && n >= seg2 {
				if !c.pending {
					c.pending, c.pk, c.pv = true, n-1, m1
					c.pendDue = n - 1 + c.refN + 2
				} else if m1 > c.pv {
					c.pk, c.pv = n-1, m1
					c.pendDue = n - 1 + c.refN + 2
				}
			}
			st.m2, st.m1 = m1, mv
			if n >= c.sbDue {
				c.searchBack(n)
			}
		}
	}
	p.z0, p.z1, q.z0, q.z1, r.z0, r.z1 = st.pz0, st.pz1, st.qz0, st.qz1, st.rz0, st.rz1
	u.z0, u.z1, w.z0, w.z1 = st.uz0, st.uz1, st.wz0, st.wz1
	c.m1, c.m2, c.sum = st.m1, st.m2, st.sum
}

// condPass runs the conditioning sections over x into out: the baseline
// high-pass (b1 = -2 b0, b2 = b0) and the two notches (b2 = b0).
func condPass(st *fusedState, cf *fusedCoef, x, out []float64) {
	pz0, pz1, qz0, qz1, rz0, rz1 := st.pz0, st.pz1, st.qz0, st.qz1, st.rz0, st.rz1
	out = out[:len(x)]
	for j, v := range x {
		pv := cf.pb0 * v
		y1 := pv + pz0
		pz0 = (pz1 - (pv + pv)) - cf.pa1*y1
		pz1 = pv - cf.pa2*y1
		qv := cf.qb0 * y1
		y2 := qv + qz0
		qz0 = (cf.qb1*y1 + qz1) - cf.qa1*y2
		qz1 = qv - cf.qa2*y2
		rv := cf.rb0 * y2
		cv := rv + rz0
		rz0 = (cf.rb1*y2 + rz1) - cf.ra1*cv
		rz1 = rv - cf.ra2*cv
		out[j] = cv
	}
	st.pz0, st.pz1, st.qz0, st.qz1, st.rz0, st.rz1 = pz0, pz1, qz0, qz1, rz0, rz1
}

// bandLoop runs the detection band-pass (high-pass then low-pass, b1 = -2
// b0 and 2 b0, b2 = b0), the derivative, the squaring, the integrator and
// the merging of integrator peaks over the conditioned samples x for indices
// c.n, c.n+1, ..., writing the rings. It stops at the first sample whose
// index reaches due (a pending peak to finalise, a search-back, or the
// learning phase) and returns the number of samples consumed, that sample
// included, and its integrator value, leaving that sample's peak logic to
// the caller (st.m1 and st.m2 not yet shifted); or len(x) and -1 when no
// sample reached due. It makes no calls, so the states stay in registers.
func (c *core) bandLoop(st *fusedState, x []float64, cbuf, fbuf, dbuf *[ringFast]float64, due int) (int, float64) {
	const m = ringFast - 1
	cf := &c.fc
	uz0, uz1, wz0, wz1 := st.uz0, st.uz1, st.wz0, st.wz1
	m1, m2, sum := st.m1, st.m2, st.sum
	n, intN, seg2 := c.n, cf.intN, c.seg+2
	f1, f2, f3, f4 := fbuf[(n-1)&m], fbuf[(n-2)&m], fbuf[(n-3)&m], fbuf[(n-4)&m]
	k, ev := len(x), -1.0
	j, stopped := 0, false
	// Four samples per pass, unrolled so that the band-passed history and
	// the integrator pair are renamed rather than moved; each sample is
	// exactly the one-sample step below (which does the remainder).
	for ; j+4 <= len(x); j += 4 {
		g := x[j : j+4 : j+4]
		// Sample n+0.
		cv0 := g[0]
		uv0 := cf.ub0 * cv0
		y0 := uv0 + uz0
		uz0 = (uz1 - (uv0 + uv0)) - cf.ua1*y0
		uz1 = uv0 - cf.ua2*y0
		wv0 := cf.wb0 * y0
		fv0 := wv0 + wz0
		wz0 = (wv0 + wv0 + wz1) - cf.wa1*fv0
		wz1 = wv0 - cf.wa2*fv0
		dv0 := (2*fv0 + f1 - f3 - 2*f4) * cf.k8
		old0 := dbuf[(n+0-intN)&m]
		sum += dv0*dv0 - old0*old0
		if sum < 0 {
			sum = 0
		}
		cbuf[(n+0)&m], fbuf[(n+0)&m], dbuf[(n+0)&m] = cv0, fv0, dv0
		mv0 := sum * cf.inv
		if n+0 >= due {
			k, ev, stopped = j+0+1, mv0, true
			break
		}
		if m1 > m2 && m1 >= mv0 && n+0 >= seg2 && (!c.pending || m1 > c.pv) {
			c.pending, c.pk, c.pv = true, n+0-1, m1
			c.pendDue = n + 0 - 1 + c.refN + 2
			due = min(c.pendDue, c.sbDue)
		}
		// Sample n+1.
		cv1 := g[1]
		uv1 := cf.ub0 * cv1
		y1 := uv1 + uz0
		uz0 = (uz1 - (uv1 + uv1)) - cf.ua1*y1
		uz1 = uv1 - cf.ua2*y1
		wv1 := cf.wb0 * y1
		fv1 := wv1 + wz0
		wz0 = (wv1 + wv1 + wz1) - cf.wa1*fv1
		wz1 = wv1 - cf.wa2*fv1
		dv1 := (2*fv1 + fv0 - f2 - 2*f3) * cf.k8
		old1 := dbuf[(n+1-intN)&m]
		sum += dv1*dv1 - old1*old1
		if sum < 0 {
			sum = 0
		}
		cbuf[(n+1)&m], fbuf[(n+1)&m], dbuf[(n+1)&m] = cv1, fv1, dv1
		mv1 := sum * cf.inv
		if n+1 >= due {
			k, ev, m1, m2, stopped = j+1+1, mv1, mv0, m1, true
			break
		}
		if mv0 > m1 && mv0 >= mv1 && n+1 >= seg2 && (!c.pending || mv0 > c.pv) {
			c.pending, c.pk, c.pv = true, n+1-1, mv0
			c.pendDue = n + 1 - 1 + c.refN + 2
			due = min(c.pendDue, c.sbDue)
		}
		// Sample n+2.
		cv2 := g[2]
		uv2 := cf.ub0 * cv2
		y2 := uv2 + uz0
		uz0 = (uz1 - (uv2 + uv2)) - cf.ua1*y2
		uz1 = uv2 - cf.ua2*y2
		wv2 := cf.wb0 * y2
		fv2 := wv2 + wz0
		wz0 = (wv2 + wv2 + wz1) - cf.wa1*fv2
		wz1 = wv2 - cf.wa2*fv2
		dv2 := (2*fv2 + fv1 - f1 - 2*f2) * cf.k8
		old2 := dbuf[(n+2-intN)&m]
		sum += dv2*dv2 - old2*old2
		if sum < 0 {
			sum = 0
		}
		cbuf[(n+2)&m], fbuf[(n+2)&m], dbuf[(n+2)&m] = cv2, fv2, dv2
		mv2 := sum * cf.inv
		if n+2 >= due {
			k, ev, m1, m2, stopped = j+2+1, mv2, mv1, mv0, true
			break
		}
		if mv1 > mv0 && mv1 >= mv2 && n+2 >= seg2 && (!c.pending || mv1 > c.pv) {
			c.pending, c.pk, c.pv = true, n+2-1, mv1
			c.pendDue = n + 2 - 1 + c.refN + 2
			due = min(c.pendDue, c.sbDue)
		}
		// Sample n+3.
		cv3 := g[3]
		uv3 := cf.ub0 * cv3
		y3 := uv3 + uz0
		uz0 = (uz1 - (uv3 + uv3)) - cf.ua1*y3
		uz1 = uv3 - cf.ua2*y3
		wv3 := cf.wb0 * y3
		fv3 := wv3 + wz0
		wz0 = (wv3 + wv3 + wz1) - cf.wa1*fv3
		wz1 = wv3 - cf.wa2*fv3
		dv3 := (2*fv3 + fv2 - fv0 - 2*f1) * cf.k8
		old3 := dbuf[(n+3-intN)&m]
		sum += dv3*dv3 - old3*old3
		if sum < 0 {
			sum = 0
		}
		cbuf[(n+3)&m], fbuf[(n+3)&m], dbuf[(n+3)&m] = cv3, fv3, dv3
		mv3 := sum * cf.inv
		if n+3 >= due {
			k, ev, m1, m2, stopped = j+3+1, mv3, mv2, mv1, true
			break
		}
		if mv2 > mv1 && mv2 >= mv3 && n+3 >= seg2 && (!c.pending || mv2 > c.pv) {
			c.pending, c.pk, c.pv = true, n+3-1, mv2
			c.pendDue = n + 3 - 1 + c.refN + 2
			due = min(c.pendDue, c.sbDue)
		}
		f4, f3, f2, f1 = fv0, fv1, fv2, fv3
		m2, m1 = mv2, mv3
		n += 4
	}
	if stopped {
		j = len(x) // stopped inside the unrolled part
	}
	for ; j < len(x); j++ {
		cv := x[j]
		uv := cf.ub0 * cv
		y4 := uv + uz0
		uz0 = (uz1 - (uv + uv)) - cf.ua1*y4
		uz1 = uv - cf.ua2*y4
		wv := cf.wb0 * y4
		fv := wv + wz0
		wz0 = (wv + wv + wz1) - cf.wa1*fv
		wz1 = wv - cf.wa2*fv
		// 5-point derivative, (2,1,0,-1,-2)/8T (Tompkins 1993 exercise
		// 12.14); samples before the segment start count as zero (the rings
		// are cleared at each segment start).
		dv := (2*fv + f1 - f3 - 2*f4) * cf.k8
		f4, f3, f2, f1 = f3, f2, f1, fv
		old := dbuf[(n-intN)&m]
		sum += dv*dv - old*old
		if sum < 0 {
			sum = 0
		}
		i := n & m
		cbuf[i], fbuf[i], dbuf[i] = cv, fv, dv
		mv := sum * cf.inv
		if n >= due {
			k, ev = j+1, mv
			break
		}
		// Peaks of the integrator: a local maximum at n-1; peaks closer
		// than the refractory period are merged, keeping the larger (as in
		// runFused).
		if m1 > m2 && m1 >= mv && n >= seg2 && (!c.pending || m1 > c.pv) {
			c.pending, c.pk, c.pv = true, n-1, m1
			c.pendDue = n - 1 + c.refN + 2
			due = min(c.pendDue, c.sbDue)
		}
		m2, m1 = m1, mv
		n++
	}
	st.uz0, st.uz1, st.wz0, st.wz1 = uz0, uz1, wz0, wz1
	st.m1, st.m2, st.sum = m1, m2, sum
	return k, ev
}

// learnStep accumulates the learning-phase statistics for sample n and ends
// the learning phase when it is complete.
func (c *core) learnStep(n int, mv, fv float64) {
	if mv > c.lmaxM {
		c.lmaxM = mv
	}
	c.lsumM += mv
	af := math.Abs(fv)
	if af > c.lmaxF {
		c.lmaxF = af
	}
	c.lsumF += af
	if n-c.seg+1 >= c.learnN {
		c.n = n + 1
		c.finishLearning()
	}
}
