// Command measure runs scangate and the decode-only baseline on the benchmark inputs,
// several times each, and prints median wall time, CPU time and peak memory with their
// ratios against the targets. Both programs run in the same invocation, so the ratios
// hold even on a busy machine where the absolute times do not.
//
//	go run ./bench/cmd/measure -bin DIR -in DIR [-runs 5]
package main

import (
	"flag"
	"fmt"
	"io/fs"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"syscall"
	"time"
)

type sample struct {
	wall, cpu time.Duration
	rssKB     int64
}

// run executes a command and reads its wall time, CPU time and peak resident memory.
func run(name string, args ...string) (sample, error) {
	cmd := exec.Command(name, args...)
	cmd.Stdout, cmd.Stderr = nil, nil
	start := time.Now()
	err := cmd.Run()
	wall := time.Since(start)
	if cmd.ProcessState == nil {
		return sample{}, err
	}
	ru, _ := cmd.ProcessState.SysUsage().(*syscall.Rusage)
	s := sample{wall: wall}
	if ru != nil {
		s.cpu = time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
		s.rssKB = ru.Maxrss // kilobytes on Linux
	}
	if code := cmd.ProcessState.ExitCode(); code > 1 { // 1 is "findings", expected
		return s, fmt.Errorf("%s %v exited %d", name, args, code)
	}
	return s, nil
}

func median(xs []sample) sample {
	by := func(f func(sample) int64) int64 {
		v := make([]int64, len(xs))
		for i, x := range xs {
			v[i] = f(x)
		}
		sort.Slice(v, func(i, j int) bool { return v[i] < v[j] })
		return v[len(v)/2]
	}
	return sample{
		wall:  time.Duration(by(func(s sample) int64 { return int64(s.wall) })),
		cpu:   time.Duration(by(func(s sample) int64 { return int64(s.cpu) })),
		rssKB: by(func(s sample) int64 { return s.rssKB }),
	}
}

func measure(runs int, name string, args ...string) sample {
	var xs []sample
	for i := 0; i < runs; i++ {
		s, err := run(name, args...)
		if err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
		xs = append(xs, s)
	}
	return median(xs)
}

func size(dir string) int64 {
	var n int64
	filepath.WalkDir(dir, func(_ string, d fs.DirEntry, err error) error {
		if err == nil && !d.IsDir() {
			if info, err := d.Info(); err == nil {
				n += info.Size()
			}
		}
		return nil
	})
	return n
}

func main() {
	bin := flag.String("bin", "", "directory holding the scangate and decodeonly binaries")
	in := flag.String("in", "", "directory the generator wrote the inputs into")
	runs := flag.Int("runs", 5, "runs per measurement; the median is reported")
	flag.Parse()
	scangate, decode := filepath.Join(*bin, "scangate"), filepath.Join(*bin, "decodeonly")
	missed := 0
	verdict := func(ok bool) string {
		if ok {
			return "ok"
		}
		missed++
		return "MISSED"
	}
	fmt.Printf("%-22s %10s %10s %9s | %10s %10s %9s | %6s %6s %6s %8s\n", "input", "wall ms", "cpu ms", "peak MiB", "base wall", "base cpu", "base MiB", "wall x", "cpu x", "MiB x", "MiB/in")
	for _, c := range []struct{ name, dir string }{
		{"(a) 100k listed", "listed"},
		{"(b) monorepo 2000x40", "monorepo"},
		{"    stress 200x40", "stress"},
		{"(c) demo", "demo"},
		{"(d) 100k tables", "tables/100000"},
	} {
		dir := filepath.Join(*in, c.dir)
		s := measure(*runs, scangate, "check", "--fail-on", "never", dir)
		b := measure(*runs, decode, dir)
		wx, cx := float64(s.wall)/float64(b.wall), float64(s.cpu)/float64(b.cpu)
		memx := float64(s.rssKB*1024) / float64(size(dir))
		basex := float64(s.rssKB) / float64(b.rssKB)
		fmt.Printf("%-22s %10.0f %10.0f %9.1f | %10.0f %10.0f %9.1f | %6.2f %6.2f %6.2f %8.1f\n", c.name,
			ms(s.wall), ms(s.cpu), float64(s.rssKB)/1024, ms(b.wall), ms(b.cpu), float64(b.rssKB)/1024, wx, cx, basex, memx)
		if c.dir == "listed" || c.dir == "monorepo" {
			fmt.Printf("    target: within 1.5x of the baseline (cpu): %s; peak memory within 3x of the input: %s\n", verdict(cx <= 1.5), verdict(memx <= 3))
		}
	}
	fmt.Println("\ngrowth with partitions (one time-partitioned table):")
	var prev sample
	for i, n := range []int{10_000, 100_000, 1_000_000} {
		s := measure(*runs, scangate, "check", "--fail-on", "never", filepath.Join(*in, "days", fmt.Sprint(n)))
		growth := ""
		if i > 0 {
			growth = fmt.Sprintf("  x%.1f for 10x the partitions", float64(s.cpu)/float64(prev.cpu))
		}
		fmt.Printf("  %9d partitions: %8.0f ms cpu %8.1f MiB%s\n", n, ms(s.cpu), float64(s.rssKB)/1024, growth)
		prev = s
	}
	fmt.Println("\ngrowth with tables (one manifest):")
	for i, n := range []int{10_000, 100_000} {
		dir := filepath.Join(*in, "tables", fmt.Sprint(n))
		s, b := measure(*runs, scangate, "check", "--fail-on", "never", dir), measure(*runs, decode, dir)
		growth := ""
		if i > 0 {
			growth = fmt.Sprintf("  x%.1f for 10x the tables", float64(s.cpu)/float64(prev.cpu))
		}
		fmt.Printf("  %9d tables: %8.0f ms cpu (%.2fx the baseline) %8.1f MiB%s\n", n, ms(s.cpu), float64(s.cpu)/float64(b.cpu), float64(s.rssKB)/1024, growth)
		prev = s
	}
	v := measure(*runs*2, scangate, "version")
	fmt.Printf("\nstartup, scangate version: %.1f ms wall (target under 20 ms): %s\n", ms(v.wall), verdict(v.wall < 20*time.Millisecond))
	if missed > 0 {
		fmt.Printf("%d target(s) missed\n", missed)
	}
}

func ms(d time.Duration) float64 { return float64(d) / float64(time.Millisecond) }
