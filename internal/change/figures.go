package change

import (
	"cmp"
	"fmt"
	"math"
	"strings"

	"github.com/scangate/scangate/internal/units"
	"github.com/scangate/scangate/rules"
)

// GradedFigures are the keys of a finding's Numbers that say how bad it is, in order:
// a finding is judged on the first of them it carries on both sides. Each is a cost
// (more is worse): excess segments (truncated-segments), fixed ms per scan
// (scan-overhead), scan wall ms (scan-time), refresh peak bytes (refresh-memory),
// today's figure of a forecast (budget-forecast) and the partition count
// (partition-count, needless-partitioning). A finding with none of them (row-count-mismatch,
// look-alike-names, the waiver rules) is judged on its severity alone.
var GradedFigures = []string{"excess_segments", "fixed_ms", "wall_ms", "peak_bytes", "today", "partitions"}

// figureNames are the graded figures for people.
var figureNames = map[string]string{
	"excess_segments": "excess segments", "fixed_ms": "fixed ms per scan", "wall_ms": "scan wall ms",
	"peak_bytes": "refresh peak", "today": "figure today", "partitions": "partitions",
}

// Moved says how a finding on both sides changed, for people: "was note", "excess
// segments 47 -> 197", both joined by "; ", or "" when neither its severity nor its
// figure (as printed) moved.
func (f FindingChange) Moved() string {
	var parts []string
	if f.Was != 0 && f.Was != f.Finding.Severity {
		parts = append(parts, "was "+f.Was.String())
	}
	if f.Figure != "" {
		if b, a := figureWords(f.Figure, f.Before), figureWords(f.Figure, f.After); b != a {
			parts = append(parts, figureNames[f.Figure]+" "+b+" -> "+a)
		}
	}
	return strings.Join(parts, "; ")
}

// figureWords writes a graded figure as findings do.
func figureWords(key string, v float64) string {
	switch {
	case strings.HasSuffix(key, "_ms"):
		return units.Ms(v)
	case strings.HasSuffix(key, "_bytes"):
		return units.Size(v)
	case v == math.Trunc(v) && math.Abs(v) < 1e15:
		return units.Num(int64(v))
	}
	return units.Short(v)
}

// PercentOptions are the options of diff's --figure-threshold PCT: a percentage, 0 or
// more.
func PercentOptions(pct float64) (Options, error) {
	if math.IsNaN(pct) || math.IsInf(pct, 0) || pct < 0 {
		return Options{}, fmt.Errorf("--figure-threshold %v: give a percentage, 0 or more", pct)
	}
	return Options{FigureThreshold: pct / 100}, nil
}

// pairFinding is the head finding h matched with the base finding b of the same
// fingerprint, with the graded figure of both sides.
func pairFinding(b, h rules.Finding, fp string) FindingChange {
	fc := FindingChange{Finding: h, Fingerprint: fp, Was: b.Severity}
	for _, k := range GradedFigures {
		before, inBase := b.Numbers[k]
		after, inHead := h.Numbers[k]
		if inBase && inHead {
			fc.Figure, fc.Before, fc.After = k, before, after
			break
		}
	}
	return fc
}

// judge says whether a finding on both sides got worse (+1), better (-1) or neither
// (0): its severity first, then its graded figure, which must move by more than
// threshold x its base value. From a base value of 0 any rise is worse.
func judge(f FindingChange, threshold float64) int {
	switch {
	case f.Escalated():
		return 1
	case f.Eased():
		return -1
	case f.Figure == "":
		return 0
	}
	moved := Round(f.After - f.Before)
	if f.Before == 0 {
		return cmp.Compare(moved, 0)
	}
	if share := moved / math.Abs(f.Before); math.Abs(share) > threshold {
		return cmp.Compare(share, 0)
	}
	return 0
}
