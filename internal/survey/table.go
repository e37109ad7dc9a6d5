package survey

import (
	"fmt"

	"github.com/scangate/scangate/schema"
)

// PartitionLimit is the most partition keys one survey holds; a key with more values is
// not a partition key (or needs a coarser --grain).
const PartitionLimit = 100_000

// Table collects one table's measurements from any number of files. The readers declare
// each file's columns (the same name must keep its type) and feed values in row order.
type Table struct {
	cols  []column
	names []string
	index map[string]int
	rows  int64
	parts map[string]int64
	limit int
	// ExactLimit overrides the package's ExactLimit (tests).
	ExactLimit int
	// Grain, when set, folds each key into its period as it is counted, so a timestamp
	// key holds one entry per period rather than one per instant.
	Grain string

	lastRaw, lastFolded string // the last key folded: rows come in runs of one key
}

// NewTable starts an empty table.
func NewTable() *Table {
	return &Table{index: map[string]int{}, parts: map[string]int64{}, ExactLimit: ExactLimit}
}

// Typed is the typed column called name, created on first use; typ is its manifest
// type and kind how its values arrive.
func (t *Table) Typed(name, typ string, kind Kind) (*Typed, error) {
	if i, ok := t.index[name]; ok {
		c, ok := t.cols[i].(*Typed)
		if !ok || c.typ != typ || c.kind != kind {
			return nil, fmt.Errorf("column %q has type %s here and another type in an earlier file; every file of a table must agree", name, typ)
		}
		return c, nil
	}
	c := &Typed{counts: t.counts(name), typ: typ, kind: kind, ints: newMonotone[int64](), flts: newMonotone[float64](), bytes: newMonotoneBytes()}
	t.add(name, c)
	return c, nil
}

// Text is the text column called name, created on first use.
func (t *Table) Text(name string) (*Text, error) {
	if i, ok := t.index[name]; ok {
		c, ok := t.cols[i].(*Text)
		if !ok {
			return nil, fmt.Errorf("column %q is typed in an earlier file and text here; survey one format at a time", name)
		}
		return c, nil
	}
	c := &Text{counts: t.counts(name), can: canAll, text: newMonotoneBytes(), num: newMonotone[float64]()}
	t.add(name, c)
	return c, nil
}

func (t *Table) counts(name string) counts {
	return counts{name: name, distinct: newDistinct(t.ExactLimit)}
}

func (t *Table) add(name string, c column) {
	t.index[name] = len(t.cols)
	t.cols = append(t.cols, c)
	t.names = append(t.names, name)
}

// Count adds n rows to the partition key (any string; "" when unpartitioned).
func (t *Table) Count(key string, n int64) error {
	if t.Grain != "" {
		if key == t.lastRaw && t.lastFolded != "" {
			key = t.lastFolded
		} else {
			folded, err := foldKey(key, t.Grain)
			if err != nil {
				return err
			}
			t.lastRaw, t.lastFolded = key, folded
			key = folded
		}
	}
	if _, ok := t.parts[key]; !ok && len(t.parts) >= PartitionLimit {
		return fmt.Errorf("more than %d partition keys; that column is not a partition key, or give a coarser --grain", PartitionLimit)
	}
	t.parts[key] += n
	t.rows += n
	return nil
}

// Result is the measured table called name; key names the partition key (a column or a
// folder key, "" for none) and grain folds its values into periods ("" lists them).
func (t *Table) Result(name, key, grain string) (schema.SurveyTable, error) {
	out := schema.SurveyTable{Name: name, Rows: t.rows, Columns: []schema.SurveyColumn{}}
	parts, growth, err := Partition(t.parts, key, grain)
	if err != nil {
		return out, err
	}
	out.Partitions, out.GrowthPerYear = parts, growth
	for _, c := range t.cols {
		p := c.profile()
		// A file without the column holds nulls for it: every row not counted is one.
		p.Nulls = max(p.Nulls, t.rows-nonNull(c))
		out.Columns = append(out.Columns, p)
	}
	return out, nil
}

func nonNull(c column) int64 {
	switch c := c.(type) {
	case *Typed:
		return c.nonNull
	case *Text:
		return c.nonNull
	}
	return 0
}
