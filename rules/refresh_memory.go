package rules

import (
	"fmt"
	"math"
	"math/bits"

	"github.com/scangate/scangate/internal/analysis"

	"github.com/scangate/scangate/internal/units"

	"github.com/scangate/scangate/internal/layout"
	"github.com/scangate/scangate/schema"
)

// RefreshMemory fires when a full refresh of the model needs more memory at its peak
// than the engine has (error) or than the refresh_memory budget allows (warning).
// The peak is the model's, not a table's: it is a model-wide rule (CheckModel).
var RefreshMemory = Rule{
	ID:      refreshMemoryID,
	Default: Error,
	Title:   "Memory at the peak of a full refresh is over the engine's memory or the budget",
	Why: "While a model refreshes, the engine keeps the old copy online for queries and builds the " +
		"new one beside it, so a full refresh needs about twice the model's encoded size (a rule " +
		"of thumb, from memory; common practice), plus the rows in flight: each of the " +
		"refresh_parallelism partitions processed at once holds up to one segment of " +
		"uncompressed rows. More parallelism and larger segments raise the peak. Above " +
		"engine.memory the refresh fails or spills: an error. Above budgets.refresh_memory: a " +
		"warning.",
	Fix: "Lower engine.refresh_parallelism or engine.segment_rows (the hint names the largest " +
		"value that fits), give the engine more memory, or shrink the model (fewer or better " +
		"encoded columns). Smaller segments mean more of them: check scan-overhead after the change.",
	How: "peak = 2 x the model's encoded size + refresh_parallelism x segment_rows x row width " +
		"(the doubling is a rule of thumb, from memory; common practice). The encoded size is the " +
		"sum over every table of its profiled columns' estimated sizes (the estimate scan-time " +
		"uses; encoded_bytes where given). The row width is the widest uncompressed row of any " +
		"table, the sum of its columns' value widths (8 bytes for int64, float64, decimal and " +
		"datetime, 4 for date, 1 for bool, avg_length + 4 for string), since any table may be " +
		"the one in flight. The peak is the model's: one finding per manifest, at engine.memory " +
		"for the error, at the budget for the warning. Tables without column profiles count as " +
		"0; without any profiles the rule stays quiet. The hint tries refresh_parallelism below " +
		"today's and segment_rows at the powers of two below today's (down to 1/1024 of it). " +
		"When a table declares refresh.routine, the message adds the routine refresh's peak: " +
		"the model's encoded size + the encoded size of what the routine refresh rebuilds (the " +
		"recent partitions of the tables that declare one, the others whole) + min(" +
		"refresh_parallelism, partitions rebuilt) x segment_rows x row width. It never exceeds " +
		"the full refresh's, which stays the checked figure: a full refresh still has to fit.",
	Bad: `engine: {segment_rows: 8Mi, memory: 16GiB, refresh_parallelism: 8}
tables:
  - name: readings   # 2 x 7.5 GiB + 8 x 8Mi rows x 24 bytes = 16.5 GiB > 16 GiB
    rows: 4G
    partitions: {scheme: none}
    columns:
      - {name: meter, type: int64, encoded_bytes: 5GiB}
      - {name: at, type: datetime, encoded_bytes: 2GiB}
      - {name: litres, type: float64, encoded_bytes: 512MiB}`,
	Good: `engine: {segment_rows: 8Mi, memory: 16GiB, refresh_parallelism: 4}
tables:
  - name: readings   # 2 x 7.5 GiB + 4 x 8Mi rows x 24 bytes = 15.75 GiB
    rows: 4G
    partitions: {scheme: none}
    columns:
      - {name: meter, type: int64, encoded_bytes: 5GiB}
      - {name: at, type: datetime, encoded_bytes: 2GiB}
      - {name: litres, type: float64, encoded_bytes: 512MiB}`,
	CheckModel: checkRefreshMemory,
}

func init() { register(RefreshMemory) }

const refreshMemoryID = "refresh-memory"

// smallestSegmentShare bounds the hint's search: segment capacities down to 1/1024 of
// today's (ten halvings), so a table of a million partitions stays cheap to check.
const smallestSegmentShare = 1024

// refreshModel is what the peak is computed from.
type refreshModel struct {
	ts          []*analysis.Table
	rowBytes    float64 // widest uncompressed row of any table
	parallelism int
	profiled    int // tables with column profiles
}

// bytesAt is the model's encoded size with segments of s rows: every per-segment
// dictionary is rebuilt, so smaller segments hold more bytes.
func (m refreshModel) bytesAt(s int64) float64 {
	var b float64
	for _, t := range m.ts {
		if s == t.Engine.SegmentRows {
			b += t.EncodedBytes() // today's, computed once per table
			continue
		}
		b += layout.TableBytes(t.Spec.Columns, t.Spec.Rows, t.Parts, s)
	}
	return b
}

// segmentsAt is the number of segments of every table with segments of s rows.
func (m refreshModel) segmentsAt(s int64) int64 {
	var n int64
	for _, t := range m.ts {
		n += layout.Compute(t.Parts, s, 0).Segments
	}
	return n
}

func (m refreshModel) peak(s int64, parallelism int) float64 {
	return layout.RefreshPeak(m.bytesAt(s), parallelism, s, m.rowBytes)
}

func checkRefreshMemory(md *analysis.Model, _ Config) []Finding {
	ts := md.Tables
	if len(ts) == 0 {
		return nil
	}
	e := ts[0].Engine
	m := refreshModel{ts: ts, parallelism: e.RefreshParallelism}
	if m.parallelism < 1 {
		m.parallelism = max(e.Cores, 1)
	}
	for _, t := range ts {
		if len(t.Spec.Columns) > 0 {
			m.profiled++
		}
		m.rowBytes = max(m.rowBytes, layout.RowBytes(t.Spec.Columns))
	}
	if m.profiled == 0 {
		return nil
	}
	// Old copy + new copy + the rows in flight; the doubling is a rule of thumb (from
	// memory, common practice), layout.RefreshPeak the one place the formula lives.
	s := e.SegmentRows
	model := m.bytesAt(s)
	peak := layout.RefreshPeak(model, m.parallelism, s, m.rowBytes)
	budget, budgetPos := refreshBudget(ts, md.Manifest.Budgets.Pos)

	var sev Severity
	var limit float64
	var limitWords string
	var pos schema.Pos
	switch {
	case e.Memory > 0 && peak > float64(e.Memory):
		sev, limit, pos = Error, float64(e.Memory), e.MemoryPos
		limitWords = units.Size(limit) + " engine memory"
	case budget > 0 && peak > budget:
		sev, limit, pos = Warning, budget, budgetPos
		limitWords = units.Size(limit) + " refresh-memory budget"
	default:
		return nil
	}
	if pos == (schema.Pos{}) {
		pos = e.Pos
	}
	inFlight := peak - 2*model
	msg := fmt.Sprintf("a full refresh peaks at about %s: 2 x %s encoded (old and new copy) + %d partitions x %s rows x %s bytes in flight (%s), %s of the %s",
		units.Size(peak), units.Size(model), m.parallelism, units.Capacity(s), units.Short(m.rowBytes), units.Size(inFlight), units.Pct(peak/limit), limitWords)
	name := "the model"
	if md.Manifest.Model != "" {
		name = "model " + md.Manifest.Model
	}
	msg = name + ": " + msg
	if sev == Error && budget > 0 && peak > budget {
		msg += fmt.Sprintf(", and above the %s refresh-memory budget", units.Size(budget))
	}
	if n := len(ts) - m.profiled; n > 0 {
		msg += fmt.Sprintf("; %d of %d tables have no column profiles and count as 0", n, len(ts))
	}
	routine := md.RefreshPeaks().Routine
	if routine != nil {
		declared := 0
		for _, t := range ts {
			if t.RoutineDeclared() {
				declared++
			}
		}
		msg += fmt.Sprintf("; the routine refresh (recent partitions of %d of %d tables, the others whole) peaks at %s, %s of it",
			declared, len(ts), units.Size(*routine), units.Pct(*routine/limit))
	}

	var hints []string
	if p := fitParallelism(limit, model, s, m.rowBytes, m.parallelism); p > 0 {
		hints = append(hints, fmt.Sprintf("lower engine.refresh_parallelism from %d to %d: refresh peak %s -> %s",
			m.parallelism, p, units.Size(peak), units.Size(layout.RefreshPeak(model, p, s, m.rowBytes))))
	}
	if s2, ok := m.fitSegments(limit, s); ok {
		now, then := m.segmentsAt(s), m.segmentsAt(s2)
		h := fmt.Sprintf("lower engine.segment_rows from %s to %s: refresh peak %s -> %s; the model's tables then hold %s segments instead of %s, %s ms of fixed CPU summed over a full scan of each table",
			units.Capacity(s), units.Capacity(s2), units.Size(peak), units.Size(m.peak(s2, m.parallelism)), units.Num(then), units.Num(now), units.Signed(float64(then-now)*e.SegmentOverheadMs))
		if len(hints) > 0 {
			h = "or " + h
		}
		hints = append(hints, h)
	}
	if len(hints) == 0 {
		raise := "give the engine at least " + units.Size(peak)
		if sev == Warning {
			raise = "raise budgets.refresh_memory to at least " + units.Size(peak)
		}
		hints = append(hints, fmt.Sprintf("no refresh_parallelism or segment_rows tried fits the %s (the two copies of the model alone take %s): %s, or shrink the model (fewer or better encoded columns)",
			limitWords, units.Size(2*model), raise))
	}
	nums := map[string]float64{
		"peak_bytes":   peak,
		"limit_bytes":  limit,
		"model_bytes":  model,
		"row_bytes":    m.rowBytes,
		"parallelism":  float64(m.parallelism),
		"segment_rows": float64(s),
	}
	if routine != nil {
		nums["routine_peak_bytes"] = *routine
	}
	return []Finding{{
		Severity: sev,
		File:     ts[0].File,
		Pos:      pos,
		Subject:  refreshMemoryID,
		Message:  msg,
		Hints:    hints,
		Numbers:  nums,
	}}
}

// refreshBudget is the tightest refresh_memory budget any table answers to (the
// model's, or a table's own) and where it is written; 0 without one.
func refreshBudget(ts []*analysis.Table, modelPos schema.Pos) (float64, schema.Pos) {
	var b float64
	var pos schema.Pos
	for _, t := range ts {
		if t.Budgets.RefreshMemory == nil {
			continue
		}
		if v := float64(*t.Budgets.RefreshMemory); b == 0 || v < b {
			b, pos = v, modelPos
			if t.Spec.Budgets.RefreshMemory != nil {
				pos = t.Spec.Budgets.Pos
			}
		}
	}
	return b, pos
}

// fitParallelism is the largest parallelism below today's whose peak fits limit:
// floor((limit - 2 x model) / (segment_rows x row width)); 0 when none does.
func fitParallelism(limit, model float64, s int64, rowBytes float64, today int) int {
	perPartition := float64(float64(s) * rowBytes)
	room := limit - 2*model
	if !(perPartition > 0) || room < perPartition {
		return 0
	}
	return units.Int(min(math.Floor(room/perPartition), float64(today-1)))
}

// fitSegments is the largest power of two below s whose peak fits limit, trying down to
// s/smallestSegmentShare. The model's bytes grow as segments shrink (each keeps its own
// dictionary), so once the two copies alone pass the limit no smaller size can fit.
func (m refreshModel) fitSegments(limit float64, s int64) (int64, bool) {
	if s <= 1 {
		return 0, false
	}
	floor := max(s/smallestSegmentShare, 1)
	for c := int64(1) << (bits.Len64(uint64(s-1)) - 1); c >= floor; c /= 2 {
		b := m.bytesAt(c)
		if 2*b > limit {
			return 0, false
		}
		if layout.RefreshPeak(b, m.parallelism, c, m.rowBytes) <= limit {
			return c, true
		}
	}
	return 0, false
}
