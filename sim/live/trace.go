package live

// rolling keeps the most recent samples of a fixed set of named signals in
// ring buffers, one per signal, so that appending never allocates.
type rolling struct {
	names []string
	time  []float64
	cols  [][]float64
	head  int // index of the next write
	n     int // samples held, up to len(time)
}

func newRolling(names []string, capacity int) *rolling {
	r := &rolling{names: names, time: make([]float64, capacity), cols: make([][]float64, len(names))}
	for i := range r.cols {
		r.cols[i] = make([]float64, capacity)
	}
	return r
}

// add appends one sample; values holds one value per signal.
func (r *rolling) add(t float64, values []float64) {
	r.time[r.head] = t
	for i, c := range r.cols {
		c[r.head] = values[i]
	}
	r.head++
	if r.head == len(r.time) {
		r.head = 0
	}
	if r.n < len(r.time) {
		r.n++
	}
}

func (r *rolling) clear() { r.head, r.n = 0, 0 }

// copyRange copies, oldest first, the samples whose time is at least from.
// It writes times into *t and, for each wanted column index, its values
// into (*cols)[k], growing the slices only when they are too short.
func (r *rolling) copyRange(from float64, want []int, t *[]float64, cols *[][]float64) {
	start := r.head - r.n
	if start < 0 {
		start += len(r.time)
	}
	// Skip samples older than from; times increase along the ring.
	lo, hi := 0, r.n
	for lo < hi {
		mid := (lo + hi) / 2
		if r.time[(start+mid)%len(r.time)] < from {
			lo = mid + 1
		} else {
			hi = mid
		}
	}
	count := r.n - lo
	first := (start + lo) % max(len(r.time), 1)
	*t = copyRing(*t, r.time, first, count)
	if cap(*cols) < len(want) {
		*cols = make([][]float64, len(want))
	}
	*cols = (*cols)[:len(want)]
	for k, ci := range want {
		if ci < 0 || ci >= len(r.cols) {
			(*cols)[k] = (*cols)[k][:0]
			continue
		}
		(*cols)[k] = copyRing((*cols)[k], r.cols[ci], first, count)
	}
}

func copyRing(dst, ring []float64, first, count int) []float64 {
	if cap(dst) < count {
		dst = make([]float64, count, count+count/4+16)
	}
	dst = dst[:count]
	if count == 0 {
		return dst
	}
	n := copy(dst, ring[first:min(first+count, len(ring))])
	copy(dst[n:], ring[:count-n])
	return dst
}
