package run

import (
	"math"
	"runtime"
	"sync/atomic"
	"testing"
	"time"
)

func TestPacePercent(t *testing.T) {
	p := &pacer{floor: 64 << 20}
	for _, c := range []struct {
		live int64
		want int
	}{
		{0, 1600},            // before the first collection: the runtime's 4 MiB goal scaled to the floor
		{1 << 20, 1600},      // capped at that same percent
		{8 << 20, 700},       // 8 MiB alive: the goal is the floor, 8 MiB x 8
		{16 << 20, 300},      // 16 x 4
		{32 << 20, 100},      // half the floor: the default pace
		{500 << 20, 100},     // never tighter than the default
		{math.MaxInt64, 100}, // what a runtime that cannot read the live heap reports
	} {
		if got := p.percent(c.live); got != c.want {
			t.Errorf("percent(%d MiB) = %d, want %d", c.live>>20, got, c.want)
		}
	}
}

func TestPaceStepsAsideForTheUsersSetting(t *testing.T) {
	for _, name := range []string{"GOGC", "GOMEMLIMIT"} {
		env := func(k string) string {
			if k == name {
				return "off"
			}
			return ""
		}
		if PaceGC(env) {
			t.Errorf("with %s set, PaceGC took over the collector's pace", name)
		}
	}
}

// After each collection the pacer sets the percent for the heap found alive and arms
// itself again, until the run keeps half the floor alive: the default pace then holds.
func TestPaceRetunesAfterEachCollection(t *testing.T) {
	got := make(chan int, 16)
	var alive atomic.Int64
	p := &pacer{floor: 64 << 20, set: func(v int) int { got <- v; return 100 }, live: alive.Load}
	defer p.stop.Store(true)
	p.arm()
	for _, c := range []struct {
		live int64
		want int
	}{{16 << 20, 300}, {8 << 20, 700}, {40 << 20, 100}} {
		alive.Store(c.live)
		if v := collectUntil(t, got); v != c.want {
			t.Fatalf("with %d MiB alive the percent set is %d, want %d", c.live>>20, v, c.want)
		}
	}
	alive.Store(8 << 20)
	for range 5 {
		runtime.GC()
		time.Sleep(10 * time.Millisecond)
	}
	select {
	case v := <-got:
		t.Errorf("after a large heap the pacer set %d; the default pace should hold", v)
	default:
	}
}

// collectUntil runs collections until the pacer sets a percent, and returns it.
func collectUntil(t *testing.T, got chan int) int {
	t.Helper()
	deadline := time.Now().Add(10 * time.Second)
	for time.Now().Before(deadline) {
		runtime.GC()
		select {
		case v := <-got:
			return v
		case <-time.After(10 * time.Millisecond):
		}
	}
	t.Fatal("no percent set after collections for 10 s")
	return 0
}

// The metric's name is right: a wrong one would leave the default pace on silently.
func TestLiveHeapReadsTheRuntime(t *testing.T) {
	runtime.GC()
	if n := liveHeap(); n <= 0 || n == math.MaxInt64 {
		t.Fatalf("live heap read as %d bytes", n)
	}
}
