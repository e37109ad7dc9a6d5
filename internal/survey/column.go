package survey

import (
	"encoding/binary"
	"math"
	"strconv"

	"github.com/scangate/scangate/schema"
)

// Kind is how a typed column's values arrive from the reader.
type Kind int

// The kinds of typed values.
const (
	KindInt   Kind = iota // int64, bool (0/1), date (days), datetime (ticks), decimal (unscaled)
	KindFloat             // float64
	KindBytes             // string and binary
)

// column is one measured column of either kind.
type column interface {
	profile() schema.SurveyColumn
}

// counts are what every column keeps: nulls, distinct hashes and runs.
type counts struct {
	name     string
	nulls    int64
	nonNull  int64
	distinct *distinct
	runs     runs
	lenSum   int64
}

func (c *counts) hash(h uint64) {
	c.nonNull++
	c.distinct.add(h)
	c.runs.add(h)
}

func (c *counts) base(typ string, sorted bool) schema.SurveyColumn {
	d, exact := c.distinct.count()
	switch {
	case sorted:
		// In sorted order equal values are neighbours: the runs are the distinct values,
		// counted exactly however many there are.
		d, exact = c.runs.n, true
	case !exact:
		// The sketch took over past the limit and can never see more values than rows.
		d = min(max(d, int64(c.distinct.limit)+1), c.nonNull)
	}
	out := schema.SurveyColumn{Name: c.name, Type: typ, Distinct: d, DistinctExact: exact, Nulls: c.nulls}
	if !exact {
		out.DistinctError = roundTo(SketchError, 4)
	}
	out.Order, out.RunLength = decideOrder(c.nonNull, c.runs.n, sorted, c.distinct.collision(c.nonNull))
	if typ == "string" {
		avg := 0.0
		if c.nonNull > 0 {
			avg = roundTo(float64(c.lenSum)/float64(c.nonNull), 2)
		}
		out.AvgLength = &avg
	}
	return out
}

// Typed is a column whose file declares its type (Parquet).
type Typed struct {
	counts
	typ   string
	kind  Kind
	ints  monotone[int64]
	flts  monotone[float64]
	bytes monotoneBytes
	buf   [8]byte
}

// Null counts a null value.
func (c *Typed) Null() { c.nulls++ }

// Int counts an integer value (KindInt).
func (c *Typed) Int(v int64) {
	binary.LittleEndian.PutUint64(c.buf[:], uint64(v))
	c.hash(Hash(c.buf[:]))
	c.ints.add(v)
}

// Float counts a floating-point value (KindFloat); -0 counts as 0.
func (c *Typed) Float(v float64) {
	if v == 0 {
		v = 0
	}
	binary.LittleEndian.PutUint64(c.buf[:], math.Float64bits(v))
	c.hash(Hash(c.buf[:]))
	c.flts.add(v)
}

// Bytes counts a byte-string value (KindBytes); b is not kept.
func (c *Typed) Bytes(b []byte) {
	c.hash(Hash(b))
	c.lenSum += int64(len(b))
	c.bytes.add(b)
}

func (c *Typed) profile() schema.SurveyColumn {
	sorted := false
	switch c.kind {
	case KindInt:
		sorted = c.ints.sorted()
	case KindFloat:
		sorted = c.flts.sorted()
	case KindBytes:
		sorted = c.bytes.sorted()
	}
	return c.base(c.typ, sorted)
}

// Text is a column of text values (CSV) whose type is inferred from every value: int64
// when each non-empty value is a base-10 integer, else float64 when each is a number,
// else bool (true/false in any case), else date (YYYY-MM-DD), else datetime (YYYY-MM-DD,
// a T or a space, hh:mm[:ss[.fraction]], an optional Z or ±hh:mm), else string. An empty
// field is a null. Distinct values and runs are counted on the text as written.
type Text struct {
	counts
	can   textKinds
	text  monotoneBytes
	num   monotone[float64]
	empty bool
}

type textKinds uint8

const (
	canInt textKinds = 1 << iota
	canFloat
	canBool
	canDate
	canDatetime
	canAll = canInt | canFloat | canBool | canDate | canDatetime
)

// Value counts one field as written.
func (c *Text) Value(b []byte) {
	if len(b) == 0 {
		c.nulls++
		return
	}
	c.hash(Hash(b))
	c.lenSum += int64(len(b))
	c.text.add(b)
	if c.can&(canInt|canFloat) != 0 {
		s := string(b)
		if c.can&canInt != 0 {
			if _, err := strconv.ParseInt(s, 10, 64); err != nil {
				c.can &^= canInt
			}
		}
		if f, err := strconv.ParseFloat(s, 64); err != nil || math.IsNaN(f) || math.IsInf(f, 0) {
			c.can &^= canInt | canFloat
		} else {
			c.num.add(f)
		}
	}
	if c.can&canBool != 0 && !isBool(b) {
		c.can &^= canBool
	}
	if c.can&canDate != 0 && !isDate(b) {
		c.can &^= canDate
	}
	if c.can&canDatetime != 0 && !isDatetime(b) {
		c.can &^= canDatetime
	}
}

// Type is the type inferred from the values so far.
func (c *Text) Type() string {
	switch {
	case c.nonNull == 0:
		return "string"
	case c.can&canInt != 0:
		return "int64"
	case c.can&canFloat != 0:
		return "float64"
	case c.can&canBool != 0:
		return "bool"
	case c.can&canDate != 0:
		return "date"
	case c.can&canDatetime != 0:
		return "datetime"
	}
	return "string"
}

func (c *Text) profile() schema.SurveyColumn {
	typ := c.Type()
	sorted := c.text.sorted()
	if typ == "int64" || typ == "float64" {
		sorted = c.num.sorted()
	}
	return c.base(typ, sorted)
}

func isBool(b []byte) bool {
	switch len(b) {
	case 4:
		return (b[0]|0x20) == 't' && (b[1]|0x20) == 'r' && (b[2]|0x20) == 'u' && (b[3]|0x20) == 'e'
	case 5:
		return (b[0]|0x20) == 'f' && (b[1]|0x20) == 'a' && (b[2]|0x20) == 'l' && (b[3]|0x20) == 's' && (b[4]|0x20) == 'e'
	}
	return false
}

func isDate(b []byte) bool {
	_, ok := parseYMD(string(b))
	return ok && len(b) == 10
}

func isDatetime(b []byte) bool {
	_, ok := parseDatetime(string(b))
	return ok
}

func roundTo(v float64, digits int) float64 {
	p := math.Pow(10, float64(digits))
	return math.Round(v*p) / p
}
