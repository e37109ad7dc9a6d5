package run

import (
	"math"
	"runtime"
	"runtime/debug"
	"runtime/metrics"
	"sync/atomic"
)

// HeapFloor is the heap a run may grow to before the collector's pace matters. A check
// keeps little alive (findings, and the parse trees of the files in flight) but
// allocates as much as it reads many times over: at the default pace the collector
// would run every few megabytes and take over a quarter of the run's CPU. Below the
// floor the pace is loosened so the heap reaches the floor between collections. A run
// that once keeps half the floor alive is a large one (a big file, or a report that
// keeps every table): the default pace holds for the rest of it, so its peak stays
// what it was, about twice what it keeps alive, and no later phase grows to the floor
// on top of freed pages.
const HeapFloor = 96 << 20

// runtimeMinimum is the runtime's heap goal before its first collection at GOGC=100.
const runtimeMinimum = 4 << 20

// PaceGC loosens the collector's pace for this process as HeapFloor says, unless the
// user set GOGC or GOMEMLIMIT (getenv reads the environment): their setting holds then.
// It reports whether it took over. Call it once, from main: tests that run commands in
// process keep the default pace.
func PaceGC(getenv func(string) string) bool {
	if getenv("GOGC") != "" || getenv("GOMEMLIMIT") != "" {
		return false
	}
	p := &pacer{floor: HeapFloor, set: debug.SetGCPercent, live: liveHeap}
	p.last = p.percent(0)
	p.set(p.last)
	p.arm()
	return true
}

// pacer re-tunes the collector's percent after each collection from the heap it found
// alive.
type pacer struct {
	floor int64
	set   func(int) int // debug.SetGCPercent
	live  func() int64  // the heap the last collection marked
	last  int
	stop  atomic.Bool // tests end the chain of sentinels
}

// percent is the GC percent whose goal, after a collection that found live bytes
// alive, is the floor: at most the percent whose first goal (the runtime's 4 MiB
// minimum, scaled by it) is the floor, and the default 100 from half the floor up.
func (p *pacer) percent(live int64) int {
	most := int(p.floor * 100 / runtimeMinimum)
	switch {
	case live <= 0:
		return most
	case live >= p.floor/2:
		return 100
	}
	return min(int((p.floor-live)*100/live), most)
}

// sentinel is garbage from birth: its cleanup runs after the collection that finds it
// so. It holds a pointer so it is never packed with other small objects, whose
// lifetime would then be its own.
type sentinel struct{ _ [2]*byte }

// arm sets a fresh sentinel whose cleanup re-tunes the pace and, while the run is
// small, arms the next one.
func (p *pacer) arm() {
	runtime.AddCleanup(new(sentinel), func(p *pacer) {
		if !p.stop.Load() && p.retune() {
			p.arm()
		}
	}, p)
}

// retune sets the percent for the heap the last collection found alive, and reports
// whether the run is still small: once it is not, the default pace is set for good.
func (p *pacer) retune() bool {
	want := p.percent(p.live())
	if want != p.last {
		p.set(want)
		p.last = want
	}
	return want > 100
}

// liveHeap is the heap the last collection marked alive; a runtime that cannot say is
// taken as a large heap, so the default pace holds.
func liveHeap() int64 {
	s := []metrics.Sample{{Name: "/gc/heap/live:bytes"}}
	metrics.Read(s)
	if s[0].Value.Kind() != metrics.KindUint64 {
		return math.MaxInt64
	}
	return int64(min(s[0].Value.Uint64(), math.MaxInt64))
}
