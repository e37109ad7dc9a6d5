package survey

import (
	"bytes"
	"math"
)

// runs counts runs of equal values in row order (by hash).
type runs struct {
	prev uint64
	have bool
	n    int64
}

func (r *runs) add(h uint64) {
	if !r.have || h != r.prev {
		r.n++
	}
	r.prev, r.have = h, true
}

// monotone tracks whether values arrive in non-decreasing or non-increasing order.
type monotone[T int64 | float64] struct {
	prev      T
	have      bool
	asc, desc bool
}

func newMonotone[T int64 | float64]() monotone[T] { return monotone[T]{asc: true, desc: true} }

func (m *monotone[T]) add(v T) {
	if m.have {
		m.asc = m.asc && v >= m.prev
		m.desc = m.desc && v <= m.prev
	}
	m.prev, m.have = v, true
}

func (m *monotone[T]) sorted() bool { return m.asc || m.desc }

// monotoneBytes is monotone for byte strings, compared bytewise.
type monotoneBytes struct {
	prev      []byte
	have      bool
	asc, desc bool
}

func newMonotoneBytes() monotoneBytes { return monotoneBytes{asc: true, desc: true} }

func (m *monotoneBytes) add(v []byte) {
	if m.have && (m.asc || m.desc) {
		c := bytes.Compare(v, m.prev)
		m.asc = m.asc && c >= 0
		m.desc = m.desc && c <= 0
	}
	if m.asc || m.desc {
		m.prev = append(m.prev[:0], v...)
	}
	m.have = true
}

func (m *monotoneBytes) sorted() bool { return m.asc || m.desc }

// ClusterFactor is how many times longer than in random order the runs of equal values
// must be for a column to count as clustered.
const ClusterFactor = 2

// decideOrder names a column's row order from n non-null values in r runs, whether they
// arrived sorted (either direction), and the chance q that two random values are equal.
// In random order a run continues with probability q, so runs average 1/(1-q) rows;
// clustered means runs at least ClusterFactor times that long and at least 2 rows.
func decideOrder(n, r int64, sorted bool, q float64) (order string, runLength int64) {
	switch {
	case n < 2:
		return "", 0
	case sorted:
		return "sorted", 0
	}
	mean := float64(n) / float64(max(r, 1))
	random := 1 / math.Max(1-q, 1e-12)
	if mean >= 2 && mean >= ClusterFactor*random {
		return "clustered", int64(math.Round(mean))
	}
	return "random", 0
}
