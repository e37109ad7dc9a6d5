package survey

import (
	"math"

	"github.com/axiomhq/hyperloglog"
	metro "github.com/dgryski/go-metro"
)

// ExactLimit is the most distinct values counted exactly. Below it a column keeps one
// 64-bit hash and one count per distinct value (at most about 2.5 MB a column); past it
// the hashes move into a HyperLogLog sketch of 2^14 registers (16 KiB a column).
const ExactLimit = 1 << 16

// SketchError is the relative standard error of the sketch's estimate: 1.04/sqrt(m) for
// m = 2^14 registers (Flajolet, Fusy, Gandouet, Meunier 2007). About 99.7% of estimates
// fall within 3 standard errors (2.4%); the tests hold every seeded case to that bound.
var SketchError = 1.04 / math.Sqrt(1<<14)

// hashSeed fixes the hash so the same values give the same counts on every machine.
const hashSeed = 1337

// Hash is the 64-bit hash of one value's bytes that distinct counting and run counting
// use. Two different values share a hash with probability about 2^-64, so the exact
// count may be short by a collision with odds of about n^2 / 2^65 (below 10^-10 at the limit).
func Hash(b []byte) uint64 { return metro.Hash64(b, hashSeed) }

// distinct counts distinct hashes, exactly while it can.
type distinct struct {
	counts map[uint64]int64 // nil once the sketch took over
	sketch *hyperloglog.Sketch
	limit  int
}

func newDistinct(limit int) *distinct {
	return &distinct{counts: map[uint64]int64{}, limit: limit}
}

func (d *distinct) add(h uint64) {
	if d.counts == nil {
		d.sketch.InsertHash(h)
		return
	}
	d.counts[h]++
	if len(d.counts) > d.limit {
		d.sketch = hyperloglog.New14()
		for k := range d.counts {
			d.sketch.InsertHash(k)
		}
		d.counts = nil
	}
}

// count is the distinct count and whether it is exact.
func (d *distinct) count() (int64, bool) {
	if d.counts != nil {
		return int64(len(d.counts)), true
	}
	return int64(d.sketch.Estimate()), false
}

// collision is the chance that two values drawn at random are equal (sum of p_v^2):
// exact while the counts are kept, 1/distinct (uniform values) once sketched.
func (d *distinct) collision(n int64) float64 {
	if n <= 0 {
		return 0
	}
	if d.counts == nil {
		c, _ := d.count()
		return 1 / math.Max(1, float64(c))
	}
	// Map order does not matter: integer sums are exact.
	var sq int64
	for _, c := range d.counts {
		sq += c * c
	}
	return float64(sq) / (float64(n) * float64(n))
}
