package layout

import (
	"math"

	"github.com/scangate/scangate/internal/units"
)

// TaskGroup is Count identical tasks of Ms each: the full segments of a partition
// all cost the same, so a billion segments are a handful of groups, not a billion tasks.
type TaskGroup struct {
	Count int64
	Ms    float64
}

// Schedule list-schedules the groups in order on cores (each task to the core that
// frees first, ties to the lowest core), the way an engine dispatches segments, and
// returns the makespan and the lower bound max(sum/cores, longest task) that no
// schedule can beat. Tasks with a non-positive or non-finite Ms count as free; cores
// below 1 count as 1.
func Schedule(groups []TaskGroup, cores int) (makespan, bound float64) {
	m := max(cores, 1)
	// Up to stackCores cores the heap lives on the stack: a scan is scheduled for every
	// layout a sweep tries, so a heap allocation here is one per candidate and column.
	var buf [stackCores]coreLoad
	h := newCoreHeap(&buf, m)
	var sum, longest float64
	for _, g := range groups {
		c, t := g.Count, g.Ms
		if c <= 0 || !(t > 0) || math.IsInf(t, 1) {
			continue
		}
		sum = float64(float64(c)*t) + sum
		longest = max(longest, t)
		if c <= 4*int64(m) {
			h.run(c, t)
			continue
		}
		h.bulk(c, t)
	}
	return h.makespan(), max(sum/float64(m), longest)
}

// coreHeap is a binary min-heap of cores ordered by (load, index), so the root is the
// core that frees first with ties to the lowest index. Each entry holds its core's load,
// so a comparison reads the entries it orders and nothing else.
type coreHeap struct {
	cores []coreLoad
}

// coreLoad is one core and the time its tasks so far end at.
type coreLoad struct {
	load float64
	core int
}

const stackCores = 64

// newCoreHeap is m idle cores, held in buf when they fit.
func newCoreHeap(buf *[stackCores]coreLoad, m int) coreHeap {
	h := coreHeap{cores: buf[:min(m, stackCores)]}
	if m > stackCores {
		h.cores = make([]coreLoad, m)
	}
	for i := range h.cores {
		h.cores[i] = coreLoad{core: i} // all loads 0: index order is a valid heap
	}
	return h
}

// makespan is when the last core frees.
func (h *coreHeap) makespan() float64 {
	var end float64
	for _, c := range h.cores {
		end = max(end, c.load)
	}
	return end
}

func (a coreLoad) before(b coreLoad) bool {
	return a.load < b.load || (a.load == b.load && a.core < b.core)
}

func (h *coreHeap) down(i int) {
	cs := h.cores
	n := len(cs)
	for {
		l := 2*i + 1
		if l >= n {
			return
		}
		j := l
		if r := l + 1; r < n && cs[r].before(cs[l]) {
			j = r
		}
		if !cs[j].before(cs[i]) {
			return
		}
		cs[i], cs[j] = cs[j], cs[i]
		i = j
	}
}

func (h *coreHeap) init() {
	for i := len(h.cores)/2 - 1; i >= 0; i-- {
		h.down(i)
	}
}

// run assigns c tasks of t one at a time.
func (h *coreHeap) run(c int64, t float64) {
	for range c {
		h.cores[0].load += t
		h.down(0)
	}
}

// bulk assigns c identical tasks at once. Core i's j-th new task would end at
// L_i + (j+1)t, and one-at-a-time list scheduling takes the c smallest start keys
// L_i + j*t (ties to the lower core). Bisection finds a level T below the c-th smallest
// key and within one task of it; every key under T is assigned in one step, the few
// left one at a time.
func (h *coreHeap) bulk(c int64, t float64) {
	m := int64(len(h.cores))
	// below counts the keys under level T, capped at c so it cannot overflow.
	below := func(T float64) int64 {
		var s int64
		for _, cl := range h.cores {
			if l := cl.load; T > l {
				k := math.Ceil((T - l) / t)
				if !(k < float64(c)) {
					return c
				}
				s += int64(k)
				if s >= c {
					return c
				}
			}
		}
		return s
	}
	lo, hi := h.cores[0].load, h.cores[0].load
	for _, cl := range h.cores {
		lo, hi = min(lo, cl.load), max(hi, cl.load)
	}
	// At hi every core has at least c/m + 1 keys below it: m*(c/m+1) > c.
	hi += float64(float64(c/m+2) * t)
	// Halve the gap until it is one task long: then at most about one key per core lies
	// between lo and hi, and those few are handed out one at a time below, which is what
	// the cores would do. Bisecting further, to adjacent floats, cost some fifty rounds
	// per group for the same schedule.
	for range 2000 {
		if hi-lo <= t {
			break
		}
		mid := lo + (hi-lo)/2
		if mid <= lo || mid >= hi {
			break
		}
		if below(mid) < c {
			lo = mid
		} else {
			hi = mid
		}
	}
	var done int64
	for i := range h.cores {
		if l := h.cores[i].load; lo > l {
			k := units.Int64(math.Ceil((lo - l) / t))
			h.cores[i].load = l + float64(float64(k)*t)
			done += k
		}
	}
	left := c - done
	// Only when t is below the float spacing at this level can many keys share one
	// float; hand those out in whole rounds, which is what the cores would do.
	if left > 4*m {
		q := left/m - 1
		for i := range h.cores {
			h.cores[i].load += float64(float64(q) * t)
		}
		left -= q * m
	}
	h.init()
	h.run(left, t)
}
