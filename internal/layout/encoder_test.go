package layout_test

// The size estimator checked against a real column encoder. The reference is the
// parquet-go library writing Apache Parquet files (an open format whose dictionary
// encoding is the run-length / bit-packing hybrid the estimator models): dictionary
// encoding, no compression, one row group per segment. parquet-go is imported here,
// in a test, only; the scangate binary does not link it.
//
//	go test ./internal/layout -run TestEncoderSweep            # the default sweep, checks docs/estimator-accuracy.md
//	go test ./internal/layout -run TestEncoderSweep -update    # rewrite docs/estimator-accuracy.md
//	SCANGATE_ENCODER_SWEEP=full go test ./internal/layout -run TestEncoderSweep -v   # a larger sweep, logged only

import (
	"bytes"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"sync"
	"testing"

	"github.com/parquet-go/parquet-go"
	"github.com/parquet-go/parquet-go/encoding/thrift"
	"github.com/parquet-go/parquet-go/format"

	"github.com/scangate/scangate/internal/layout"
	"github.com/scangate/scangate/schema"
)

var update = flag.Bool("update", false, "rewrite docs/estimator-accuracy.md from the default sweep")

// indexTolerance is the target for the dictionary index stream: the estimate within
// ±15% of what the encoder writes. A stream of a few run headers (under tinyStream
// bytes a segment) is held to tinySlack bytes a segment instead: there one header byte
// is more than 15% of the stream.
const (
	indexTolerance = 0.15
	tinyStream     = 8
	tinySlack      = 2 // one varint header byte and one value byte
)

const docPath = "../../docs/estimator-accuracy.md"

// Typed rows for the encoder; "dict" asks for dictionary encoding.
type (
	int64Row struct {
		V int64 `parquet:"v,dict"`
	}
	float64Row struct {
		V float64 `parquet:"v,dict"`
	}
	stringRow struct {
		V string `parquet:"v,dict"`
	}
	dateRow struct {
		V int32 `parquet:"v,dict,date"`
	}
	datetimeRow struct {
		V int64 `parquet:"v,dict,timestamp(microsecond)"`
	}
	boolRow struct {
		V bool `parquet:"v,dict"`
	}
)

// The same columns written plain, for the choice between the two encodings.
type (
	int64PlainRow struct {
		V int64 `parquet:"v,plain"`
	}
	float64PlainRow struct {
		V float64 `parquet:"v,plain"`
	}
	stringPlainRow struct {
		V string `parquet:"v,plain"`
	}
	datePlainRow struct {
		V int32 `parquet:"v,plain,date"`
	}
	datetimePlainRow struct {
		V int64 `parquet:"v,plain,timestamp(microsecond)"`
	}
	boolPlainRow struct {
		V bool `parquet:"v,plain"`
	}
)

// choiceMargin is how far apart the encoder's two sizes (dictionary and plain) must be
// for the estimate to be held to the encoder's choice: closer than 5%, either is fine.
const choiceMargin = 0.05

// plainShare is the share of the plain size from which a dictionary-encoded column is
// also written plain: below it the dictionary wins by a factor of two and more.
const plainShare = 0.5

// stringLength is the length of every synthetic string value (avg_length).
const stringLength = 12

// sweepTable is one table shape of the sweep: its rows and partitions.
type sweepTable struct {
	label string
	spec  schema.Table
}

func table(label string, rows int64, p schema.Partitions) sweepTable {
	return sweepTable{label, schema.Table{Name: label, Rows: rows, Partitions: p}}
}

// encCase is one synthetic column.
type encCase struct {
	typ   string
	order schema.Order
	run   int64 // declared run length (clustered)
	d     int64 // cardinality asked for; the table holds min(d, rows, runs) values
	table sweepTable
	seg   int64 // segment capacity = row-group size
	pages bool  // write at the encoder's default page buffer instead of one page per row group
}

func (c encCase) orderLabel() string {
	if c.order == schema.Clustered {
		if c.run <= 0 {
			return "clustered, runs of rows/distinct (default)"
		}
		return fmt.Sprintf("clustered, runs of %s", group(c.run))
	}
	return string(c.order)
}

// encResult is the estimate against what the encoder wrote for one case.
type encResult struct {
	encCase
	distinct         int64 // values the table actually holds: the column profile's distinct
	tables           int   // tables drawn; sizes below are per table, averaged
	rowGroups        int
	segments         int64 // layout.Compute
	idxEst, idxEnc   float64
	dictEst, dictEnc float64
	pagesWritten     int
	overhead         int64 // page headers and the 1-byte bit width of each data page
	// The choice: the plain estimate (layout.PlainBytes), the segments the estimate
	// writes plain (layout.SegmentSize), and, when written plain too, the encoder's
	// plain data pages.
	plainEst       float64
	plainSegs      int
	plainWritten   bool
	plainEnc       float64
	plainPageBytes int64 // page headers of the plain file
	// Segment by segment, for the first table drawn: the estimate's choice (plain or
	// not) and the encoder's sizes of that row group, dictionary encoded and plain.
	segPlain                []bool
	segDictEnc, segPlainEnc []float64
}

// encoderPlainSegs counts the row groups whose plain encoding the encoder writes
// smaller by more than choiceMargin, and those where the two are within it.
func (r encResult) encoderPlainSegs() (plain, either int) {
	for i, d := range r.segDictEnc {
		p := r.segPlainEnc[i]
		switch {
		case math.Abs(d-p) <= choiceMargin*min(d, p):
			either++
		case p < d:
			plain++
		}
	}
	return plain, either
}

// choiceMisses counts the row groups where the estimate takes the encoding the encoder
// writes larger (by more than choiceMargin).
func (r encResult) choiceMisses() int {
	n := 0
	for i, d := range r.segDictEnc {
		p := r.segPlainEnc[i]
		if math.Abs(d-p) > choiceMargin*min(d, p) && (p < d) != r.segPlain[i] {
			n++
		}
	}
	return n
}

func (r encResult) dictEncTotal() float64 { return r.idxEnc + r.dictEnc }
func (r encResult) dictEstTotal() float64 { return r.idxEst + r.dictEst }

func (r encResult) idxErr() float64 { return r.idxEst/r.idxEnc - 1 }

// idxOK applies the check: ±15%, or for a stream of a few run headers, tinySlack bytes
// a segment.
func (r encResult) idxOK() bool {
	if math.Abs(r.idxErr()) <= indexTolerance {
		return true
	}
	segs := float64(r.rowGroups)
	return r.idxEnc < tinyStream*segs && math.Abs(r.idxEst-r.idxEnc) <= tinySlack*segs
}
func (r encResult) dictErr() float64 { return r.dictEst/r.dictEnc - 1 }

// sweep is a named list of cases.
type sweep struct {
	name  string
	cases []encCase
}

// defaultSweep is what go test runs (and what the accuracy document shows); short
// trims it, full widens it.
func defaultSweep(mode string) sweep {
	const s = 1 << 16
	tables := []sweepTable{
		table("200,003 rows, 1 partition", 200_003, schema.Partitions{Scheme: schema.SchemeNone}),
		table("555,557 rows, 3 even partitions", 555_557, schema.Partitions{Scheme: schema.SchemeEven, Count: 3}),
	}
	cards := []int64{2, 10, 100, 1_000, 10_000, 100_000, 1_000_000, 10_000_000}
	runs := []int64{8, 100, 10_000}
	typeCards := []int64{10, 10_000, 10_000_000}
	switch mode {
	case "short":
		tables = tables[:1]
		cards = []int64{2, 100, 10_000, 1_000_000}
		runs = []int64{100}
		typeCards = []int64{10_000}
	case "full":
		tables = append(tables,
			table("3,000,017 rows, 1 partition", 3_000_017, schema.Partitions{Scheme: schema.SchemeNone}),
			table("12,000,036 rows, 12 listed partitions", 0, schema.Partitions{Scheme: schema.SchemeList, Items: listItems(12, 1_000_003)}))
		cards = nil
		for e := 0.5; e <= 7.01; e += 0.5 {
			cards = append(cards, int64(math.Round(math.Pow(10, e))))
		}
		cards[0] = 2
		runs = []int64{2, 8, 30, 100, 1_000, 10_000, 0}
	}
	var cs []encCase
	for _, tb := range tables {
		rows := tableRows(tb)
		for _, d := range upTo(cards, rows) {
			cs = append(cs, encCase{typ: "int64", order: schema.Random, d: d, table: tb, seg: s})
			cs = append(cs, encCase{typ: "int64", order: schema.Sorted, d: d, table: tb, seg: s})
		}
		for _, l := range runs {
			// A table of R/l runs holds at most R/l values.
			limit := rows
			if l > 0 {
				limit = max(1, rows/l)
			}
			for _, d := range upTo(cards, limit) {
				cs = append(cs, encCase{typ: "int64", order: schema.Clustered, run: l, d: d, table: tb, seg: s})
			}
		}
	}
	if mode != "short" {
		// The top of the cardinality sweep needs a table that can hold 10^7 values.
		big := table("10,000,019 rows, 1 partition", 10_000_019, schema.Partitions{Scheme: schema.SchemeNone})
		for _, d := range []int64{1_000_000, 10_000_000} {
			cs = append(cs, encCase{typ: "int64", order: schema.Random, d: d, table: big, seg: s})
			cs = append(cs, encCase{typ: "int64", order: schema.Sorted, d: d, table: big, seg: s})
		}
	}
	tb := tables[0]
	if mode != "short" {
		// Near where plain encoding overtakes the dictionary: a 65,536-row segment of a
		// random column meets about three quarters of the values at 75,000 distinct.
		for _, d := range []int64{30_000, 60_000, 75_000, 150_000} {
			cs = append(cs, encCase{typ: "int64", order: schema.Random, d: d, table: tb, seg: s})
		}
	}
	for _, typ := range []string{"float64", "string", "date", "datetime"} {
		for _, d := range typeCards {
			cs = append(cs, encCase{typ: typ, order: schema.Random, d: d, table: tb, seg: s})
			cs = append(cs, encCase{typ: typ, order: schema.Sorted, d: d, table: tb, seg: s})
		}
	}
	for _, o := range []schema.Order{schema.Random, schema.Sorted, schema.Clustered} {
		cs = append(cs, encCase{typ: "bool", order: o, run: 100, d: 2, table: tb, seg: s})
	}
	// The same columns at the encoder's default page buffer, for the page overhead.
	for _, d := range []int64{100, 1_000_000} {
		for _, o := range []schema.Order{schema.Random, schema.Sorted} {
			cs = append(cs, encCase{typ: "int64", order: o, d: d, table: tb, seg: s, pages: true})
		}
	}
	return sweep{mode, cs}
}

// upTo keeps the cardinalities below limit and the first at or above it (which the
// table caps at limit): larger ones would repeat that column.
func upTo(cards []int64, limit int64) []int64 {
	var out []int64
	for _, d := range cards {
		out = append(out, d)
		if d >= limit {
			break
		}
	}
	return out
}

func tableRows(tb sweepTable) int64 {
	if tb.spec.Partitions.Scheme != schema.SchemeList {
		return tb.spec.Rows
	}
	var n int64
	for _, it := range tb.spec.Partitions.Items {
		n += it.Rows
	}
	return n
}

func listItems(n int, rows int64) []schema.Item {
	out := make([]schema.Item, n)
	for i := range out {
		out[i] = schema.Item{Name: strconv.Itoa(i + 1), Rows: rows}
	}
	return out
}

func TestEncoderSweep(t *testing.T) {
	mode := "default"
	switch {
	case os.Getenv("SCANGATE_ENCODER_SWEEP") == "full":
		mode = "full"
	case testing.Short():
		mode = "short"
	}
	sw := defaultSweep(mode)
	results := runSweep(t, sw.cases)
	for _, r := range results {
		name := fmt.Sprintf("%s %s d=%d %s", r.typ, r.orderLabel(), r.d, r.table.label)
		// Exact: one row group per segment, segments never spanning partitions.
		if int64(r.rowGroups) != r.segments {
			t.Errorf("%s: encoder wrote %d row groups, layout.Compute says %d segments", name, r.rowGroups, r.segments)
		}
		if !r.pages && !r.idxOK() {
			t.Errorf("%s: index stream estimated %.0f bytes, encoder %.0f (%+.1f%%, want within ±%.0f%%)",
				name, r.idxEst, r.idxEnc, 100*r.idxErr(), 100*indexTolerance)
		}
		if r.pages {
			continue
		}
		if !r.plainWritten {
			if r.plainSegs > 0 {
				t.Errorf("%s: the estimate writes %d segments plain, but the case was not written plain", name, r.plainSegs)
			}
			continue
		}
		// Plain values have one size: within a byte a row group (bit-packed booleans).
		if math.Abs(r.plainEst-r.plainEnc) > float64(r.rowGroups) {
			t.Errorf("%s: plain estimated %.0f bytes, encoder %.0f", name, r.plainEst, r.plainEnc)
		}
		if miss := r.choiceMisses(); miss > 0 {
			p, e := r.encoderPlainSegs()
			t.Errorf("%s: in %d row groups the estimate takes the larger encoding (estimate plain in %d of %d, encoder smaller plain in %d, within %.0f%% in %d)",
				name, miss, r.plainSegs, r.rowGroups, p, 100*choiceMargin, e)
		}
	}
	doc := accuracyDoc(results)
	if mode == "full" {
		t.Log("\n" + doc)
		return
	}
	if mode != "default" {
		return // the document shows the default sweep only
	}
	if *update {
		if err := os.MkdirAll(filepath.Dir(docPath), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(docPath, []byte(doc), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	have, err := os.ReadFile(docPath)
	if err != nil || string(have) != doc {
		t.Errorf("%s is out of date; run go generate ./...", docPath)
	}
}

// runSweep encodes every case on all cores; results keep the cases' order.
func runSweep(t *testing.T, cases []encCase) []encResult {
	t.Helper()
	out := make([]encResult, len(cases))
	errs := make([]error, len(cases))
	next := make(chan int)
	var wg sync.WaitGroup
	for range max(1, runtime.GOMAXPROCS(0)) {
		wg.Go(func() {
			for i := range next {
				out[i], errs[i] = runCase(cases[i], int64(i))
			}
		})
	}
	for i := range cases {
		next <- i
	}
	close(next)
	wg.Wait()
	for i, err := range errs {
		if err != nil {
			t.Fatalf("case %d (%+v): %v", i, cases[i], err)
		}
	}
	return out
}

// Expected sizes are compared with encoded ones, so a column whose index stream is
// small (a few long runs) is drawn again with new seeds and the sums compared: one
// table of 20 runs says little about the expected run count.
const (
	minSampleBytes = 16 << 10 // stop drawing once the encoder wrote this many index bytes
	maxTables      = 32
)

func runCase(c encCase, seed int64) (encResult, error) {
	parts, err := layout.Expand(c.table.spec)
	if err != nil {
		return encResult{}, err
	}
	var rows int64
	for _, p := range parts {
		rows += p.Rows
	}
	r := encResult{encCase: c, segments: layout.Compute(parts, c.seg, 0).Segments}
	// The row groups must be the layout's segments, in order: each partition's full
	// segments, then its part-empty one.
	var want []int64
	for _, p := range parts {
		for left := p.Rows; left > 0; left -= c.seg {
			want = append(want, min(left, c.seg))
		}
	}
	pageBuf := int(c.seg*8) + 4096 // room for one row group's 4-byte indexes, so one data page
	if c.pages {
		pageBuf = parquet.DefaultPageBufferSize
	}
	nearPlain := false // a segment of the first table comes near its plain size
	for r.tables < maxTables && (r.tables == 0 || (c.order != schema.Sorted && r.idxEnc < minSampleBytes)) {
		ids, distinct := generate(c, rows, rand.New(rand.NewPCG(uint64(seed), uint64(r.tables))))
		data, err := encodeAs(c.typ, false, ids, parts, c.seg, pageBuf)
		if err != nil {
			return r, err
		}
		chunks, err := readChunks(data)
		if err != nil {
			return r, err
		}
		col := schema.Column{Type: c.typ, Distinct: distinct, Order: c.order, RunLength: c.run}
		if c.typ == "string" {
			col.AvgLength = stringLength
		}
		r.tables++
		r.distinct += distinct
		r.rowGroups = len(chunks)
		var got []int64
		var sum float64
		for _, ch := range chunks {
			if ch.fallback {
				return r, fmt.Errorf("a data page is not dictionary encoded")
			}
			got = append(got, ch.rows)
			s := layout.DictionarySize(col, rows, ch.rows)
			r.idxEst += s.Index
			r.dictEst += s.Dictionary
			r.plainEst += layout.PlainBytes(col, ch.rows)
			isPlain := layout.SegmentSize(col, rows, ch.rows).Plain > 0
			if isPlain {
				r.plainSegs++
			}
			if r.tables == 1 {
				r.segPlain = append(r.segPlain, isPlain)
				r.segDictEnc = append(r.segDictEnc, float64(ch.dataBytes-int64(ch.pages)+ch.dictBytes))
				if s.Bytes() >= plainShare*layout.PlainBytes(col, ch.rows) {
					nearPlain = true
				}
			}
			sum += layout.SegmentBytes(col, rows, ch.rows)
			// The index stream proper: the data pages less their 1-byte bit-width prefix.
			r.idxEnc += float64(ch.dataBytes - int64(ch.pages))
			r.dictEnc += float64(ch.dictBytes)
			r.pagesWritten += ch.pages
			r.overhead += ch.dictHeader + ch.dataHeader + int64(ch.pages)
		}
		if !slices.Equal(got, want) {
			return r, fmt.Errorf("row groups hold %v rows, the layout's segments %v", got, want)
		}
		// ColumnBytes, which the rules use, is the same sum taken by segment size.
		if cb := layout.ColumnBytes(col, parts, c.seg); math.Abs(cb-sum) > 1e-9*sum {
			return r, fmt.Errorf("ColumnBytes %v, sum of SegmentBytes over the row groups %v", cb, sum)
		}
	}
	// Per table, averaged over the tables drawn.
	k := float64(r.tables)
	r.distinct = int64(math.Round(float64(r.distinct) / k))
	r.idxEst, r.idxEnc, r.dictEst, r.dictEnc = r.idxEst/k, r.idxEnc/k, r.dictEst/k, r.dictEnc/k
	r.plainEst, r.plainSegs = r.plainEst/k, int(math.Round(float64(r.plainSegs)/k))
	r.pagesWritten = int(math.Round(float64(r.pagesWritten) / k))
	r.overhead = int64(math.Round(float64(r.overhead) / k))
	// A column whose dictionary encoding comes near its plain size is written plain
	// too (plain sizes do not depend on the draw: one table does).
	if !c.pages && (r.plainSegs > 0 || nearPlain) {
		ids, _ := generate(c, rows, rand.New(rand.NewPCG(uint64(seed), 0)))
		data, err := encodeAs(c.typ, true, ids, parts, c.seg, pageBuf)
		if err != nil {
			return r, err
		}
		chunks, err := readChunks(data)
		if err != nil {
			return r, err
		}
		if len(chunks) != r.rowGroups {
			return r, fmt.Errorf("plain: %d row groups, dictionary %d", len(chunks), r.rowGroups)
		}
		for _, ch := range chunks {
			if !ch.plain || ch.dictBytes != 0 {
				return r, fmt.Errorf("a page of the plain file is not plain encoded")
			}
			r.plainEnc += float64(ch.dataBytes)
			r.plainPageBytes += ch.dataHeader
			r.segPlainEnc = append(r.segPlainEnc, float64(ch.dataBytes))
		}
		r.plainWritten = true
	}
	return r, nil
}

// generate draws the value ids of a column of rows rows and counts the distinct ones.
//   - random: a table holding min(d, rows) values equally often (ids i mod d),
//     shuffled;
//   - sorted: the same values in order, each in one run of about rows/d rows;
//   - clustered: runs of run rows on average (uniform in run ± run/2), the runs'
//     values equally often, shuffled.
func generate(c encCase, rows int64, rng *rand.Rand) ([]int64, int64) {
	d := min(c.d, rows)
	ids := make([]int64, rows)
	switch c.order {
	case schema.Sorted:
		for i := range ids {
			ids[i] = int64(i) * d / rows
		}
	case schema.Clustered:
		l := c.run
		if l <= 0 {
			l = max(1, rows/d)
		}
		h := (l - 1) / 2
		var lens []int64
		for left := rows; left > 0; {
			n := min(left, l-h+rng.Int64N(2*h+1))
			lens = append(lens, n)
			left -= n
		}
		vals := make([]int64, len(lens))
		for j := range vals {
			vals[j] = int64(j) % d
		}
		rng.Shuffle(len(vals), func(a, b int) { vals[a], vals[b] = vals[b], vals[a] })
		i := 0
		for j, n := range lens {
			for range n {
				ids[i] = vals[j]
				i++
			}
		}
	default:
		for i := range ids {
			ids[i] = int64(i) % d
		}
		rng.Shuffle(len(ids), func(a, b int) { ids[a], ids[b] = ids[b], ids[a] })
	}
	seen := make([]bool, d)
	var distinct int64
	for _, id := range ids {
		if !seen[id] {
			seen[id] = true
			distinct++
		}
	}
	return ids, distinct
}

// encodeAs writes the ids as one column of typ, dictionary encoded or plain: a row group
// per segment of seg rows, and a new row group at every partition boundary (a segment
// never spans partitions).
func encodeAs(typ string, plain bool, ids []int64, parts []layout.Partition, seg int64, pageBuf int) ([]byte, error) {
	// An odd multiplier is a bijection on 64-bit words: distinct ids stay distinct.
	i64 := func(id int64) int64 { return id * -7046029254386353131 }
	f64 := func(id int64) float64 { return float64(id)*0.25 + 0.125 }
	str := func(id int64) string {
		s := strconv.FormatInt(id, 10)
		return strings.Repeat("0", stringLength-len(s)) + s
	}
	ts := func(id int64) int64 { return 1_700_000_000_000_000 + id*1_000_000 }
	if plain {
		switch typ {
		case "int64":
			return write(ids, parts, seg, pageBuf, func(id int64) int64PlainRow { return int64PlainRow{i64(id)} })
		case "float64":
			return write(ids, parts, seg, pageBuf, func(id int64) float64PlainRow { return float64PlainRow{f64(id)} })
		case "string":
			return write(ids, parts, seg, pageBuf, func(id int64) stringPlainRow { return stringPlainRow{str(id)} })
		case "date":
			return write(ids, parts, seg, pageBuf, func(id int64) datePlainRow { return datePlainRow{int32(id)} })
		case "datetime":
			return write(ids, parts, seg, pageBuf, func(id int64) datetimePlainRow { return datetimePlainRow{ts(id)} })
		case "bool":
			return write(ids, parts, seg, pageBuf, func(id int64) boolPlainRow { return boolPlainRow{id == 1} })
		}
		return nil, fmt.Errorf("no encoder mapping for type %q", typ)
	}
	switch typ {
	case "int64":
		return write(ids, parts, seg, pageBuf, func(id int64) int64Row { return int64Row{i64(id)} })
	case "float64":
		return write(ids, parts, seg, pageBuf, func(id int64) float64Row { return float64Row{f64(id)} })
	case "string":
		return write(ids, parts, seg, pageBuf, func(id int64) stringRow { return stringRow{str(id)} })
	case "date":
		return write(ids, parts, seg, pageBuf, func(id int64) dateRow { return dateRow{int32(id)} })
	case "datetime":
		return write(ids, parts, seg, pageBuf, func(id int64) datetimeRow { return datetimeRow{ts(id)} })
	case "bool":
		return write(ids, parts, seg, pageBuf, func(id int64) boolRow { return boolRow{id == 1} })
	}
	return nil, fmt.Errorf("no encoder mapping for type %q", typ)
}

func write[T any](ids []int64, parts []layout.Partition, seg int64, pageBuf int, conv func(int64) T) ([]byte, error) {
	var buf bytes.Buffer
	w := parquet.NewGenericWriter[T](&buf,
		parquet.MaxRowsPerRowGroup(seg),
		parquet.Compression(&parquet.Uncompressed),
		parquet.PageBufferSize(pageBuf))
	rows := make([]T, 0, 1<<14)
	off := int64(0)
	for _, p := range parts {
		for i := off; i < off+p.Rows; i++ {
			rows = append(rows, conv(ids[i]))
			if len(rows) == cap(rows) {
				if _, err := w.Write(rows); err != nil {
					return nil, err
				}
				rows = rows[:0]
			}
		}
		if _, err := w.Write(rows); err != nil {
			return nil, err
		}
		rows = rows[:0]
		// End the row group at the partition's end.
		if err := w.Flush(); err != nil {
			return nil, err
		}
		off += p.Rows
	}
	if err := w.Close(); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

// chunk is what the file says about one column chunk (one row group of the column).
type chunk struct {
	rows                  int64
	dictHeader, dictBytes int64 // dictionary page header and payload
	pages                 int   // data pages
	dataHeader, dataBytes int64 // data page headers and payloads
	fallback              bool  // a data page not dictionary encoded
	plain                 bool  // every data page plain encoded
}

// readChunks reads the footer and walks every page header of every column chunk.
func readChunks(data []byte) ([]chunk, error) {
	f, err := parquet.OpenFile(bytes.NewReader(data), int64(len(data)))
	if err != nil {
		return nil, err
	}
	var out []chunk
	for _, rg := range f.Metadata().RowGroups {
		if len(rg.Columns) != 1 {
			return nil, fmt.Errorf("%d columns in a row group, want 1", len(rg.Columns))
		}
		md := rg.Columns[0].MetaData
		if md.Codec != format.Uncompressed {
			return nil, fmt.Errorf("column chunk compressed with %v", md.Codec)
		}
		ch := chunk{rows: rg.NumRows, plain: true}
		off := md.DataPageOffset
		if md.DictionaryPageOffset > 0 {
			off = md.DictionaryPageOffset
		}
		end := off + md.TotalCompressedSize
		if off < 0 || end > int64(len(data)) {
			return nil, fmt.Errorf("column chunk at %d..%d outside the file", off, end)
		}
		for off < end {
			rd := bytes.NewReader(data[off:end])
			var h format.PageHeader
			if err := thrift.NewDecoder((&thrift.CompactProtocol{}).NewReader(rd)).Decode(&h); err != nil {
				return nil, fmt.Errorf("page header at %d: %w", off, err)
			}
			hdr := int64(end-off) - int64(rd.Len())
			size := int64(h.CompressedPageSize)
			if size != int64(h.UncompressedPageSize) {
				return nil, fmt.Errorf("page at %d compressed", off)
			}
			switch h.Type {
			case format.DictionaryPage:
				ch.dictHeader += hdr
				ch.dictBytes += size
			case format.DataPage, format.DataPageV2:
				enc := format.Plain
				if v, ok := h.DataPageHeaderV2.Get(); ok {
					enc = v.Encoding
					if v.DefinitionLevelsByteLength != 0 || v.RepetitionLevelsByteLength != 0 {
						return nil, fmt.Errorf("levels in a required column")
					}
				} else if v, ok := h.DataPageHeader.Get(); ok {
					enc = v.Encoding
				}
				ch.fallback = ch.fallback || (enc != format.RLEDictionary && enc != format.PlainDictionary)
				ch.plain = ch.plain && enc == format.Plain
				ch.pages++
				ch.dataHeader += hdr
				ch.dataBytes += size
			default:
				return nil, fmt.Errorf("unexpected page type %v", h.Type)
			}
			off += hdr + size
		}
		if ch.dictHeader+ch.dictBytes+ch.dataHeader+ch.dataBytes != md.TotalUncompressedSize {
			return nil, fmt.Errorf("pages sum to %d bytes, the chunk says %d",
				ch.dictHeader+ch.dictBytes+ch.dataHeader+ch.dataBytes, md.TotalUncompressedSize)
		}
		out = append(out, ch)
	}
	return out, nil
}

// encoderVersion is the parquet-go version go.mod requires (a test binary carries no
// module versions of its own).
func encoderVersion() string {
	data, err := os.ReadFile("../../go.mod")
	if err == nil {
		for _, line := range strings.Split(string(data), "\n") {
			if f := strings.Fields(line); len(f) >= 2 && f[0] == "github.com/parquet-go/parquet-go" {
				return f[1]
			}
		}
	}
	return "version unknown"
}

// accuracyDoc writes the Markdown accuracy table of a sweep.
func accuracyDoc(rs []encResult) string {
	var b strings.Builder
	say := func(format string, a ...any) { fmt.Fprintf(&b, format, a...) }
	say("# Size estimator accuracy\n\n")
	say("Generated by `go generate ./...` (internal/layout/encoder_test.go);\n")
	say("`go test ./...` fails when this file no longer matches what the test measures.\n")
	say("`SCANGATE_ENCODER_SWEEP=full go test ./internal/layout -run TestEncoderSweep -v` logs a larger sweep\n")
	say("(half-decade cardinalities, more run lengths and tables) in the same form.\n\n")
	say("The estimate is `layout.SegmentSize` for each segment (the rules sum the same numbers through\n")
	say("`layout.ColumnBytes`): the dictionary encoding (`layout.DictionarySize`, the index and\n")
	say("dictionary columns below) or, when smaller, the plain values. The reference encoder is the parquet-go library (%s) writing an\n", encoderVersion())
	say("Apache Parquet file of one column: dictionary encoding (and plain, for the choice between\n")
	say("the two), no compression, a row group per\n")
	say("segment of S = 65,536 rows, a new row group at every partition boundary, and a page buffer\n")
	say("large enough that each row group is one data page (the last table shows the encoder's default\n")
	say("pages). *Index* is the dictionary index stream: the data pages' payload less their 1-byte\n")
	say("bit-width prefix. *Dictionary* is the dictionary page's payload. *Page headers* are the page\n")
	say("headers and bit-width bytes the encoder adds, which the estimate leaves out. Error is\n")
	say("estimate / encoder − 1.\n\n")
	say("Checked for every case: the number of row groups equals `layout.Compute`'s segments, and the\n")
	say("row groups hold exactly the layout's segment sizes; the index estimate is within ±%.0f%% of the\n", 100*indexTolerance)
	say("encoder (a stream of a few run headers, under %d bytes a segment, within %d bytes a segment:\n", tinyStream, tinySlack)
	say("there one header byte is more than 15%%); every data page is dictionary encoded.\n\n")
	say("Synthetic columns: *random* holds min(d, rows) values equally often, shuffled; *sorted* holds\n")
	say("them in order; *clustered* has runs of the stated average length (uniform in ±half of it),\n")
	say("their values equally often, shuffled. *Distinct* is what the table really holds (a profile's\n")
	say("`distinct`): a table cannot hold more values than rows, or than runs. Columns with small index\n")
	say("streams are drawn several times with new seeds (*tables*) and the sizes averaged per table,\n")
	say("since the estimate is an expectation.\n\n")

	checked := func(r encResult) bool { return !r.pages }
	// Worst index error by order and cardinality decade, every type and table.
	say("## Worst index-stream error by order and cardinality\n\n")
	var orders []string
	for _, r := range rs {
		if checked(r) && !slices.Contains(orders, r.orderLabel()) {
			orders = append(orders, r.orderLabel())
		}
	}
	decade := func(d int64) int { return int(math.Floor(math.Log10(float64(d)) + 1e-9)) }
	top := 0
	for _, r := range rs {
		top = max(top, decade(r.distinct))
	}
	say("| order |")
	for e := 0; e <= top; e++ {
		say(" %s |", decadeLabel(e))
	}
	say(" worst |\n|---|")
	for e := 0; e <= top+1; e++ {
		say("---:|")
	}
	say("\n")
	for _, o := range orders {
		say("| %s |", o)
		var worst *encResult
		for e := 0; e <= top; e++ {
			var w *encResult
			for i := range rs {
				r := &rs[i]
				if checked(*r) && r.orderLabel() == o && decade(r.distinct) == e && (w == nil || math.Abs(r.idxErr()) > math.Abs(w.idxErr())) {
					w = r
				}
			}
			if w == nil {
				say(" |")
				continue
			}
			if worst == nil || math.Abs(w.idxErr()) > math.Abs(worst.idxErr()) {
				worst = w
			}
			say(" %s |", pctErr(w.idxErr()))
		}
		say(" %s (%s, distinct %s) |\n", pctErr(worst.idxErr()), worst.typ, group(worst.distinct))
	}

	main := func(r encResult) bool { return r.typ == "int64" && !r.pages }
	var tables []string
	for _, r := range rs {
		if main(r) && !slices.Contains(tables, r.table.label) {
			tables = append(tables, r.table.label)
		}
	}
	for _, tl := range tables {
		say("\n## int64, %s\n\n", tl)
		say("| order | distinct | tables | row groups | index estimate | index encoder | error | dictionary estimate | dictionary encoder | error | page headers |\n")
		say("|---|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|\n")
		for _, r := range rs {
			if main(r) && r.table.label == tl {
				say("| %s | %s | %d | %d | %s | %s | %s | %s | %s | %s | %s |\n", r.orderLabel(), group(r.distinct), r.tables, r.rowGroups,
					group(int64(math.Round(r.idxEst))), group(int64(math.Round(r.idxEnc))), pctErr(r.idxErr()),
					group(int64(math.Round(r.dictEst))), group(int64(math.Round(r.dictEnc))), pctErr(r.dictErr()), group(r.overhead))
			}
		}
	}

	say("\n## Other types, %s\n\n", rs[0].table.label)
	say("Strings are %d characters long (`avg_length: %d`); a dictionary entry is 4 + %d bytes.\n\n", stringLength, stringLength, stringLength)
	say("| type | order | distinct | tables | index estimate | index encoder | error | dictionary estimate | dictionary encoder | error |\n")
	say("|---|---|---:|---:|---:|---:|---:|---:|---:|---:|\n")
	for _, r := range rs {
		if r.typ != "int64" && !r.pages {
			say("| %s | %s | %s | %d | %s | %s | %s | %s | %s | %s |\n", r.typ, r.orderLabel(), group(r.distinct), r.tables,
				group(int64(math.Round(r.idxEst))), group(int64(math.Round(r.idxEnc))), pctErr(r.idxErr()),
				group(int64(math.Round(r.dictEst))), group(int64(math.Round(r.dictEnc))), pctErr(r.dictErr()))
		}
	}

	say("\n## Dictionary or plain, segment by segment\n\n")
	say("A segment is written plain when its values, one after the other, take fewer bytes than its\n")
	say("dictionary and indexes (`layout.PlainBytes`: the value width, a string's 4-byte length prefix\n")
	say("and bytes, booleans one bit). Every case whose estimate writes a segment plain, or comes\n")
	say("within a factor of %.0f of it, is also written plain by the encoder, and each row group's two\n", 1/plainShare)
	say("encoder sizes (without page headers) are compared. Checked: the plain estimate is the\n")
	say("encoder's within a byte a row group, and in no row group does the estimate take the larger\n")
	say("encoding when the encoder's two sizes are more than %.0f%% apart.\n\n", 100*choiceMargin)
	say("| type | order | distinct | table | row groups | plain: estimate | plain smaller: encoder | within %.0f%% | dictionary encoder | plain estimate | plain encoder |\n", 100*choiceMargin)
	say("|---|---|---:|---|---:|---:|---:|---:|---:|---:|---:|\n")
	for _, r := range rs {
		if r.plainWritten {
			p, e := r.encoderPlainSegs()
			say("| %s | %s | %s | %s | %d | %d | %d | %d | %s | %s | %s |\n", r.typ, r.orderLabel(), group(r.distinct), r.table.label, r.rowGroups,
				r.plainSegs, p, e, group(int64(math.Round(r.dictEncTotal()))), group(int64(math.Round(r.plainEst))), group(int64(math.Round(r.plainEnc))))
		}
	}

	say("\n## At the encoder's default page buffer (%s KiB), %s\n\n", group(parquet.DefaultPageBufferSize/1024), rs[0].table.label)
	say("| order | distinct | data pages | index estimate | index encoder | error | page headers and bit-width bytes |\n")
	say("|---|---:|---:|---:|---:|---:|---:|\n")
	for _, r := range rs {
		if r.pages {
			say("| %s | %s | %d | %s | %s | %s | %s |\n", r.orderLabel(), group(r.distinct), r.pagesWritten,
				group(int64(math.Round(r.idxEst))), group(int64(math.Round(r.idxEnc))), pctErr(r.idxErr()), group(r.overhead))
		}
	}
	say("%s", encoderDetails)
	return b.String()
}

func decadeLabel(e int) string {
	if e == 0 {
		return "2–9"
	}
	return "10^" + strconv.Itoa(e)
}

// encoderDetails are what the reference encoder does that the estimate leaves out,
// found by reading the files the sweep writes (page by page, run by run).
const encoderDetails = `
## Where the encoder differs from the estimate

- **Page headers.** Every data page carries a header of about 50–100 bytes (it holds the
  page's statistics, so it grows with the value width), every dictionary page one of about
  20, and every dictionary-encoded data page starts with a 1-byte index bit width. The
  estimate counts none of this: an engine's segment metadata is its own. The *page headers*
  columns above show what it adds per table.
- **Pages restart runs.** At the encoder's default 256 KiB page buffer a data page holds about
  64,000 indexes (4 bytes each while buffered), so a segment of S rows is several pages; each
  page restarts its runs and takes its bit width from the largest index it holds, so a sorted
  column pays one more run per page. The last table shows the effect; the checked sweep writes
  one page per row group.
- **Run headers.** The hybrid encoding works in groups of 8 indexes: a group of one value
  joins a run-length run, any other group is bit-packed. A run that does not start on a group
  boundary costs a bit-packed group besides its run-length run, and a run shorter than 15
  rows may hold no whole group. The estimate models both, with runs starting anywhere relative
  to the groups. Runs that all start on a group boundary (a sorted column whose run length is
  an exact multiple of 8 in a table whose size is too) need no bit-packed groups and encode
  smaller than the estimate; the sweep's table sizes are chosen so that this does not happen
  by accident. The encoder writes the last n mod 8 indexes of a page as short runs of their own
  (a header and a value each) rather than a padded group; the estimate leaves that out.
- **Single-valued segments** need no index bits: the encoder writes bit width 0 and one run
  header, as the estimate does.
- **Booleans.** The encoder's boolean dictionary always holds both values, false first, so a
  segment of only true values still needs 1-bit indexes, and it bit-packs the dictionary page
  (1 byte for both values) where the estimate counts 1 byte per entry. These bytes are the
  whole difference in the bool rows above.
- **Plain when smaller.** With its default settings this encoder keeps dictionary encoding
  however large the dictionary grows (the test checks that every data page of the dictionary
  file is dictionary encoded); other writers fall back to plain encoding once a column chunk's
  dictionary passes a size limit (about 1 MiB is common; from memory). The estimate instead
  takes, segment by segment, whichever of the two is smaller, so a column of unique values
  (the default when a profile gives no distinct) costs its plain width and no more; the
  encoder is asked for both and the choice is checked against its sizes.
`

func pctErr(e float64) string {
	if math.IsNaN(e) || math.IsInf(e, 0) {
		return "n/a"
	}
	return fmt.Sprintf("%+.1f%%", 100*e)
}

// group writes an integer with thousands separators.
func group(n int64) string {
	s := strconv.FormatInt(n, 10)
	neg := strings.HasPrefix(s, "-")
	s = strings.TrimPrefix(s, "-")
	for i := len(s) - 3; i > 0; i -= 3 {
		s = s[:i] + "," + s[i:]
	}
	if neg {
		return "-" + s
	}
	return s
}
