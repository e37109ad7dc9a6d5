// Command gen writes the benchmark inputs into a directory, deterministically.
//
//	go run ./bench/cmd/gen -out DIR
package main

import (
	"flag"
	"fmt"
	"os"
	"path/filepath"

	"github.com/scangate/scangate/bench/gen"
)

func main() {
	out := flag.String("out", "bench-inputs", "directory to write the inputs into")
	seed := flag.Uint64("seed", 1, "random seed")
	flag.Parse()
	write := func(name string, data []byte) {
		p := filepath.Join(*out, name)
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
		if err := os.WriteFile(p, data, 0o644); err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
	}
	write("listed/listed.yaml", gen.Listed(100_000, *seed))
	for name, data := range gen.Monorepo(2000, 40, 0.05, *seed) {
		write(filepath.Join("monorepo", name), data)
	}
	mono := gen.Monorepo(2000, 40, 0.05, *seed)
	for name, data := range gen.Changed(mono, 0.05, *seed) {
		write(filepath.Join("monorepo-changed", name), data)
	}
	for name, data := range gen.Dense(800, *seed) {
		write(filepath.Join("dense", name), data)
	}
	for name, data := range gen.Monorepo(200, 40, 1, *seed) {
		write(filepath.Join("stress", name), data)
	}
	for _, n := range []int{10_000, 100_000, 1_000_000} {
		write(fmt.Sprintf("days/%d/days.yaml", n), gen.Days(n))
	}
	for _, n := range []int{1_000, 10_000, 100_000} {
		write(fmt.Sprintf("tables/%d/tables.yaml", n), gen.ManyTables(n, *seed))
	}
}
