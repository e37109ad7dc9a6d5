package layout_test

// The size estimator checked against a real column encoder. The reference is the
// parquet-go library writing Apache Parquet files (an open format whose dictionary
// encoding is the run-length / bit-packing hybrid the estimator models): dictionary
// encoding, no compression, one row group per segment. parquet-go is imported here,
// in a test, only; the scangate binary does not link it.
//
//	go test ./rules/layout -run TestEncoderSweep            # the default sweep, checks docs/estimator-accuracy.md
//	go test ./rules/layout -run TestEncoderSweep -update    # rewrite docs/estimator-accuracy.md
//	SCANGATE_ENCODER_SWEEP=full go test ./rules/layout -run TestEncoderSweep -v   # a larger sweep, logged only

import (
	"bytes"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"runtime/debug"
	"slices"
	"strconv"
	"strings"
	"sync"
	"testing"

	"github.com/parquet-go/parquet-go"
	"github.com/parquet-go/parquet-go/encoding/thrift"
	"github.com/parquet-go/parquet-go/format"

	"github.com/scangate/scangate/rules/layout"
	"github.com/scangate/scangate/schema"
)

var update = flag.Bool("update", false, "rewrite docs/estimator-accuracy.md from the default sweep")

// indexTolerance is the target for the dictionary index stream: the estimate
// within ±15% of what the encoder writes.
const indexTolerance = 0.15

const docPath = "../../docs/estimator-accuracy.md"

// Typed rows for the encoder; "dict" asks for dictionary encoding.
type (
	int64Row    struct{ V int64 `parquet:"v,dict"` }
	float64Row  struct{ V float64 `parquet:"v,dict"` }
	stringRow   struct{ V string `parquet:"v,dict"` }
	dateRow     struct{ V int32 `parquet:"v,dict,date"` }
	datetimeRow struct{ V int64 `parquet:"v,dict,timestamp(microsecond)"` }
	boolRow     struct{ V bool `parquet:"v,dict"` }
)

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
}

func (r encResult) idxErr() float64  { return r.idxEst/r.idxEnc - 1 }
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
			table("12,000,000 rows, 12 listed partitions", 0, schema.Partitions{Scheme: schema.SchemeList, Items: listItems(12, 1_000_000)}))
		cards = nil
		for e := 0.5; e <= 7.01; e += 0.5 {
			cards = append(cards, int64(math.Round(math.Pow(10, e))))
		}
		cards[0] = 2
		runs = []int64{2, 8, 30, 100, 1_000, 10_000, 0}
	}
	var cs []encCase
	for _, tb := range tables {
		for _, d := range cards {
			cs = append(cs, encCase{typ: "int64", order: schema.Random, d: d, table: tb, seg: s})
			cs = append(cs, encCase{typ: "int64", order: schema.Sorted, d: d, table: tb, seg: s})
			for _, l := range runs {
				cs = append(cs, encCase{typ: "int64", order: schema.Clustered, run: l, d: d, table: tb, seg: s})
			}
		}
	}
	tb := tables[0]
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
		if !r.pages && math.Abs(r.idxErr()) > indexTolerance {
			t.Errorf("%s: index stream estimated %.0f bytes, encoder %.0f (%+.1f%%, want within ±%.0f%%)",
				name, r.idxEst, r.idxEnc, 100*r.idxErr(), 100*indexTolerance)
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
		t.Errorf("%s is out of date; run go test ./rules/layout -run TestEncoderSweep -update", docPath)
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
	for r.tables < maxTables && (r.tables == 0 || (c.order != schema.Sorted && r.idxEnc < minSampleBytes)) {
		ids, distinct := generate(c, rows, rand.New(rand.NewPCG(uint64(seed), uint64(r.tables))))
		data, err := encode(c.typ, ids, parts, c.seg, pageBuf)
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
			s := layout.SegmentSize(col, rows, ch.rows)
			r.idxEst += s.Index
			r.dictEst += s.Dictionary
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
	r.pagesWritten = int(math.Round(float64(r.pagesWritten) / k))
	r.overhead = int64(math.Round(float64(r.overhead) / k))
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

// encode writes the ids as one column of typ: a row group per segment of seg rows, and
// a new row group at every partition boundary (a segment never spans partitions).
func encode(typ string, ids []int64, parts []layout.Partition, seg int64, pageBuf int) ([]byte, error) {
	switch typ {
	case "int64":
		// An odd multiplier is a bijection on 64-bit words: distinct ids stay distinct.
		return write(ids, parts, seg, pageBuf, func(id int64) int64Row { return int64Row{id * -7046029254386353131} })
	case "float64":
		return write(ids, parts, seg, pageBuf, func(id int64) float64Row { return float64Row{float64(id)*0.25 + 0.125} })
	case "string":
		return write(ids, parts, seg, pageBuf, func(id int64) stringRow {
			s := strconv.FormatInt(id, 10)
			return stringRow{strings.Repeat("0", stringLength-len(s)) + s}
		})
	case "date":
		return write(ids, parts, seg, pageBuf, func(id int64) dateRow { return dateRow{int32(id)} })
	case "datetime":
		return write(ids, parts, seg, pageBuf, func(id int64) datetimeRow { return datetimeRow{1_700_000_000_000_000 + id*1_000_000} })
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
		ch := chunk{rows: rg.NumRows}
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

// encoderVersion is the parquet-go version this test binary was built with.
func encoderVersion() string {
	if info, ok := debug.ReadBuildInfo(); ok {
		for _, m := range info.Deps {
			if m.Path == "github.com/parquet-go/parquet-go" {
				return m.Version
			}
		}
	}
	return "(unknown version)"
}

// accuracyDoc writes the Markdown accuracy table of a sweep.
func accuracyDoc(rs []encResult) string {
	var b strings.Builder
	p := func(format string, a ...any) { fmt.Fprintf(&b, format, a...) }
	p("# Size estimator accuracy\n\n")
	p("Generated by `go test ./rules/layout -run TestEncoderSweep -update` (rules/layout/encoder_test.go);\n")
	p("`go test ./...` fails when this file no longer matches what the test measures.\n\n")
	p("The estimate is `layout.SegmentSize` for each segment (the rules sum the same numbers through\n")
	p("`layout.ColumnBytes`). The reference encoder is the parquet-go library (%s) writing an Apache\n", encoderVersion())
	p("Parquet file of one column: dictionary encoding, no compression, a row group per segment of\n")
	p("S = 65,536 rows, a new row group at every partition boundary, and a page buffer large enough\n")
	p("that each row group is one data page (the last section shows the encoder's default pages).\n")
	p("\"Index\" is the dictionary index stream: the data pages' payload less their 1-byte bit-width\n")
	p("prefix. \"Dictionary\" is the dictionary page's payload. Error is estimate / encoder − 1. The\n")
	p("check is ±%.0f%% on the index stream and an exact row-group count for every case.\n\n", 100*indexTolerance)
	p("Synthetic columns: *random* holds min(d, rows) values equally often, shuffled; *sorted* holds\n")
	p("them in order; *clustered* has runs of the stated average length (uniform in ±half of it),\n")
	p("their values equally often, shuffled. \"distinct\" is what the table really holds (a profile's\n")
	p("`distinct`): a table cannot hold more values than rows, or than runs.\n\n")

	main := func(r encResult) bool { return r.typ == "int64" && !r.pages }
	p("## Worst error by order\n\n")
	p("| order | cases | worst index error | at distinct | worst dictionary error | at distinct |\n|---|---|---|---|---|---|\n")
	var orders []string
	for _, r := range rs {
		if main(r) && !slices.Contains(orders, r.orderLabel()) {
			orders = append(orders, r.orderLabel())
		}
	}
	for _, o := range orders {
		var n int
		var wi, wd encResult
		for _, r := range rs {
			if !main(r) || r.orderLabel() != o {
				continue
			}
			if n == 0 || math.Abs(r.idxErr()) > math.Abs(wi.idxErr()) {
				wi = r
			}
			if n == 0 || math.Abs(r.dictErr()) > math.Abs(wd.dictErr()) {
				wd = r
			}
			n++
		}
		p("| %s | %d | %s | %s | %s | %s |\n", o, n, pctErr(wi.idxErr()), group(wi.distinct), pctErr(wd.dictErr()), group(wd.distinct))
	}

	var tables []string
	for _, r := range rs {
		if main(r) && !slices.Contains(tables, r.table.label) {
			tables = append(tables, r.table.label)
		}
	}
	for _, tl := range tables {
		p("\n## int64, %s\n\n", tl)
		p("| order | distinct | row groups | index estimate | index encoder | error | dictionary estimate | dictionary encoder | error | page headers |\n")
		p("|---|---:|---:|---:|---:|---:|---:|---:|---:|---:|\n")
		for _, r := range rs {
			if main(r) && r.table.label == tl {
				p("| %s | %s | %d | %s | %s | %s | %s | %s | %s | %s |\n", r.orderLabel(), group(r.distinct), r.rowGroups,
					group(int64(math.Round(r.idxEst))), group(int64(r.idxEnc)), pctErr(r.idxErr()),
					group(int64(math.Round(r.dictEst))), group(int64(r.dictEnc)), pctErr(r.dictErr()), group(r.overhead))
			}
		}
	}

	p("\n## Other types, %s\n\n", rs[0].table.label)
	p("Strings are %d characters long (`avg_length: %d`); a dictionary entry is 4 + %d bytes.\n\n", stringLength, stringLength, stringLength)
	p("| type | order | distinct | index estimate | index encoder | error | dictionary estimate | dictionary encoder | error |\n")
	p("|---|---|---:|---:|---:|---:|---:|---:|---:|\n")
	for _, r := range rs {
		if r.typ != "int64" && !r.pages {
			p("| %s | %s | %s | %s | %s | %s | %s | %s | %s |\n", r.typ, r.orderLabel(), group(r.distinct),
				group(int64(math.Round(r.idxEst))), group(int64(r.idxEnc)), pctErr(r.idxErr()),
				group(int64(math.Round(r.dictEst))), group(int64(r.dictEnc)), pctErr(r.dictErr()))
		}
	}

	p("\n## At the encoder's default page buffer (%s KiB), %s\n\n", group(parquet.DefaultPageBufferSize/1024), rs[0].table.label)
	p("| order | distinct | data pages | index estimate | index encoder | error | page headers and bit-width bytes |\n")
	p("|---|---:|---:|---:|---:|---:|---:|\n")
	for _, r := range rs {
		if r.pages {
			p("| %s | %s | %d | %s | %s | %s | %s |\n", r.orderLabel(), group(r.distinct), r.pagesWritten,
				group(int64(math.Round(r.idxEst))), group(int64(r.idxEnc)), pctErr(r.idxErr()), group(r.overhead))
		}
	}
	return b.String()
}

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
