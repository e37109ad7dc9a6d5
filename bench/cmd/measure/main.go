// Command measure runs scangate and the decode-only baseline on the benchmark inputs,
// several times each, and prints median wall time, CPU time and peak memory with their
// ratios against the targets. The two runs of a ratio go back to back in each round, in
// alternating order, and the ratio is the median of the rounds' own ratios: a slow spell
// of a shared machine moves both runs of a round, so the ratios hold even where the
// absolute times do not.
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

// median is the median of each figure of xs, as middle takes it.
func median(xs []sample) sample {
	by := func(f func(sample) int64) int64 {
		v := make([]float64, len(xs))
		for i, x := range xs {
			v[i] = float64(f(x))
		}
		return int64(middle(v))
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

// ratio is a/b of wall time, CPU time and peak memory.
type ratio struct{ wall, cpu, rss float64 }

// paired runs a and b back to back runs times, b first every other round, and returns
// their medians and the medians of the rounds' ratios a/b.
func paired(runs int, a, b []string) (sa, sb sample, r ratio) {
	var as, bs []sample
	var wall, cpu, rss []float64
	for i := 0; i < runs; i++ {
		first, second := a, b
		if i%2 == 1 {
			first, second = b, a
		}
		x, y := mustRun(first), mustRun(second)
		if i%2 == 1 {
			x, y = y, x
		}
		as, bs = append(as, x), append(bs, y)
		wall = append(wall, float64(x.wall)/float64(y.wall))
		cpu = append(cpu, float64(x.cpu)/float64(y.cpu))
		rss = append(rss, float64(x.rssKB)/float64(y.rssKB))
	}
	return median(as), median(bs), ratio{middle(wall), middle(cpu), middle(rss)}
}

// middle is the median of xs (the mean of the two middle ones for an even count).
func middle(xs []float64) float64 {
	sort.Float64s(xs)
	n := len(xs)
	if n%2 == 1 {
		return xs[n/2]
	}
	return (xs[n/2-1] + xs[n/2]) / 2
}

func mustRun(cmd []string) sample {
	s, err := run(cmd[0], cmd[1:]...)
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(1)
	}
	return s
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

// row is one line of the Markdown table printed for README.md's Speed section.
type row struct{ input, cpu, wall, peak, perByte, base string }

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
	var readme []row
	checkCmd := func(dir string, extra ...string) []string {
		return append(append([]string{scangate, "check", "--fail-on", "never"}, extra...), dir)
	}
	// against is a check of dir, paired with the baseline's decode of it.
	against := func(dir string) (s, b sample, r ratio) {
		return paired(*runs, checkCmd(dir), []string{decode, dir})
	}
	fmt.Printf("%-24s %10s %10s %9s | %10s %10s %9s | %6s %6s %6s %8s\n", "input", "wall ms", "cpu ms", "peak MiB", "base wall", "base cpu", "base MiB", "wall x", "cpu x", "MiB x", "MiB/in")
	for _, c := range []struct{ name, dir, readme string }{
		{"(a) 100k listed", "listed", "one manifest, 100,000 listed partitions"},
		{"(b) monorepo 2000x40", "monorepo", "2,000 manifests of about 40 tables, 5% messy"},
		{"    dense 800x40", "dense", "800 manifests of about 40 tables, half of them flagged"},
		{"    stress 200x40", "stress", "200 manifests of about 40 tables, all messy"},
		{"(c) demo", "demo", "the demo"},
		{"(d) 100k tables", "tables/100000", "one manifest of 100,000 small tables"},
	} {
		dir := filepath.Join(*in, c.dir)
		s, b, r := against(dir)
		wx, cx, basex := r.wall, r.cpu, r.rss
		memx := float64(s.rssKB*1024) / float64(size(dir))
		fmt.Printf("%-24s %10.0f %10.0f %9.1f | %10.0f %10.0f %9.1f | %6.2f %6.2f %6.2f %8.1f\n", c.name,
			ms(s.wall), ms(s.cpu), mib(s), ms(b.wall), ms(b.cpu), mib(b), wx, cx, basex, memx)
		switch c.dir {
		case "listed":
			fmt.Printf("    target: cpu within 1.5x of the baseline: %s; peak memory within 1.2x of the baseline's: %s\n", verdict(cx <= 1.5), verdict(basex <= 1.2))
		case "monorepo", "dense":
			fmt.Printf("    target: cpu within 1.5x of the baseline: %s (aim: 1.2x)\n", verdict(cx <= 1.5))
		}
		readme = append(readme, row{fmt.Sprintf("%s (%s)", c.readme, sizeWords(size(dir))), fmt.Sprintf("%.2fx", cx), fmt.Sprintf("%.2fx", wx),
			fmt.Sprintf("%.0f MiB (%.2fx)", mib(s), basex), fmt.Sprintf("%.1fx", memx), fmt.Sprintf("%.0f MiB", mib(b))})
	}

	mono := filepath.Join(*in, "monorepo")
	j, text, jr := paired(*runs, checkCmd(mono, "--format", "json"), checkCmd(mono))
	fmt.Printf("\n--format json on the monorepo: %.0f ms cpu (%.2fx the text run), %.1f MiB peak (%.2fx the text run's)\n", ms(j.cpu), jr.cpu, mib(j), jr.rss)
	fmt.Printf("    target: peak memory within 2.5x of the text run's: %s\n", verdict(jr.rss <= 2.5))
	readme = append(readme, row{"the monorepo, `--format json` (against the text run)", fmt.Sprintf("%.2fx", jr.cpu), fmt.Sprintf("%.2fx", jr.wall),
		fmt.Sprintf("%.0f MiB (%.2fx)", mib(j), jr.rss), "", fmt.Sprintf("%.0f MiB", mib(text))})

	head := filepath.Join(*in, "monorepo-changed")
	d, h, dr := paired(*runs, []string{scangate, "diff", mono, head}, checkCmd(head))
	fmt.Printf("diff of the monorepo and a copy with 5%% of its files changed: %.0f ms cpu (%.2fx one check of the head side), %.1f MiB peak (%.2fx)\n", ms(d.cpu), dr.cpu, mib(d), dr.rss)
	fmt.Printf("    target: cpu within 1.5x of one check: %s; peak memory within 2x: %s\n", verdict(dr.cpu <= 1.5), verdict(dr.rss <= 2))
	readme = append(readme, row{"`diff` of the monorepo and a copy with 5% of its files changed (against one check of the copy)", fmt.Sprintf("%.2fx", dr.cpu), fmt.Sprintf("%.2fx", dr.wall),
		fmt.Sprintf("%.0f MiB (%.2fx)", mib(d), dr.rss), "", fmt.Sprintf("%.0f MiB", mib(h))})

	fmt.Println("\ngrowth with partitions (one time-partitioned table):")
	growth := func(what string, ns []int, dir func(int) string) {
		var prev sample
		for i, n := range ns {
			s, _, r := against(dir(n))
			g := ""
			if i > 0 {
				g = fmt.Sprintf("  x%.1f cpu, x%.1f MiB for %gx the %s", float64(s.cpu)/float64(prev.cpu), float64(s.rssKB)/float64(prev.rssKB), float64(n)/float64(ns[i-1]), what)
			}
			fmt.Printf("  %9d %s: %8.0f ms cpu (%.2fx the baseline) %8.1f MiB%s\n", n, what, ms(s.cpu), r.cpu, mib(s), g)
			prev = s
		}
	}
	growth("partitions", []int{10_000, 100_000, 1_000_000}, func(n int) string { return filepath.Join(*in, "days", fmt.Sprint(n)) })
	fmt.Println("\ngrowth with tables (one manifest):")
	growth("tables", []int{1_000, 10_000, 100_000}, func(n int) string { return filepath.Join(*in, "tables", fmt.Sprint(n)) })

	v := measure(*runs*2, scangate, "version")
	fmt.Printf("\nstartup, scangate version: %.1f ms wall (target under 20 ms): %s\n", ms(v.wall), verdict(v.wall < 20*time.Millisecond))
	if missed > 0 {
		fmt.Printf("%d target(s) missed\n", missed)
	}

	fmt.Println("\nfor README.md's Speed section:")
	fmt.Println("| input | CPU ratio | wall ratio | peak memory (ratio) | per input byte | baseline peak |")
	fmt.Println("|---|---|---|---|---|---|")
	for _, r := range readme {
		fmt.Printf("| %s | %s | %s | %s | %s | %s |\n", r.input, r.cpu, r.wall, r.peak, r.perByte, r.base)
	}
}

func mib(s sample) float64 { return float64(s.rssKB) / 1024 }

// sizeWords is a size as the README writes it: "4 MiB", "12 KiB".
func sizeWords(n int64) string {
	if n >= 1<<20 {
		return fmt.Sprintf("%.0f MiB", float64(n)/(1<<20))
	}
	return fmt.Sprintf("%.0f KiB", float64(n)/(1<<10))
}

func ms(d time.Duration) float64 { return float64(d) / float64(time.Millisecond) }
