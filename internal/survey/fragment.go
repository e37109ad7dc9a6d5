package survey

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"strconv"
	"strings"
	"unicode/utf8"

	"go.yaml.in/yaml/v3"

	"github.com/scangate/scangate/schema"
)

// Fragment is the manifest fragment of the tables: a `tables:` list, one entry each, in
// the manifest's own key order. Partitions become `none`, `list` with the exact rows of
// each item, or `time` with one tier keeping every period.
func Fragment(tables []schema.SurveyTable) []byte {
	seq := &yaml.Node{Kind: yaml.SequenceNode}
	for _, t := range tables {
		seq.Content = append(seq.Content, TableNode(t))
	}
	doc := mapping(false, "tables", seq)
	var b bytes.Buffer
	enc := yaml.NewEncoder(&b)
	enc.SetIndent(2)
	_ = enc.Encode(doc) // cannot fail: every string is UTF-8 (FromResult and run.Survey call CheckText first)
	_ = enc.Close()
	return b.Bytes()
}

// TableNode is one table's manifest entry as a YAML mapping node.
func TableNode(t schema.SurveyTable) *yaml.Node {
	var kv []any
	kv = append(kv, "name", str(t.Name))
	if t.Partitions.Scheme != "list" {
		kv = append(kv, "rows", num(t.Rows))
	}
	if t.GrowthPerYear != nil {
		kv = append(kv, "growth_per_year", flt(*t.GrowthPerYear))
	}
	kv = append(kv, "partitions", partitionsNode(t))
	if len(t.Columns) > 0 {
		cols := &yaml.Node{Kind: yaml.SequenceNode}
		for _, c := range t.Columns {
			cols.Content = append(cols.Content, columnNode(c))
		}
		kv = append(kv, "columns", cols)
	}
	return mapping(false, kv...)
}

func partitionsNode(t schema.SurveyTable) *yaml.Node {
	p := t.Partitions
	switch p.Scheme {
	case "time":
		tier := mapping(true, "grain", str(p.Grain), "keep", num(int64(len(p.Items))))
		return mapping(false, "scheme", str("time"), "tiers", &yaml.Node{Kind: yaml.SequenceNode, Content: []*yaml.Node{tier}})
	case "list":
		items := &yaml.Node{Kind: yaml.SequenceNode}
		for _, it := range p.Items {
			items.Content = append(items.Content, mapping(true, "name", str(it.Name), "rows", num(it.Rows)))
		}
		return mapping(false, "scheme", str("list"), "items", items)
	}
	return mapping(true, "scheme", str("none"))
}

func columnNode(c schema.SurveyColumn) *yaml.Node {
	kv := []any{"name", str(c.Name), "type", str(c.Type)}
	if c.Distinct > 0 {
		kv = append(kv, "distinct", num(c.Distinct))
	}
	if c.AvgLength != nil {
		kv = append(kv, "avg_length", flt(*c.AvgLength))
	}
	if c.Order != "" && c.Order != "random" {
		kv = append(kv, "order", str(c.Order))
	}
	if c.RunLength > 0 {
		kv = append(kv, "run_length", num(c.RunLength))
	}
	return mapping(true, kv...)
}

// JSON is survey's JSON output (schema/survey.schema.json), indented, ending in a newline.
func JSON(tables []schema.SurveyTable) []byte {
	b, _ := json.MarshalIndent(schema.Survey{SurveyVersion: schema.SurveyVersion, Tables: tables}, "", "  ")
	return append(b, '\n')
}

// mapping builds a mapping node from alternating keys (strings) and value nodes.
func mapping(flow bool, kv ...any) *yaml.Node {
	n := &yaml.Node{Kind: yaml.MappingNode}
	if flow {
		n.Style = yaml.FlowStyle
	}
	for i := 0; i < len(kv); i += 2 {
		n.Content = append(n.Content, &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!str", Value: kv[i].(string)}, kv[i+1].(*yaml.Node))
	}
	return n
}

// str is a string scalar; the encoder quotes it when plain text would read as another type.
func str(s string) *yaml.Node { return &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!str", Value: s} }

func num(v int64) *yaml.Node {
	return &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!int", Value: strconv.FormatInt(v, 10)}
}

// flt is a number scalar: whole numbers are written as integers (8, not 8.0), so no
// encoder needs a tag to keep them numbers.
func flt(v float64) *yaml.Node {
	if v == math.Trunc(v) && math.Abs(v) < 1e15 {
		return num(int64(v))
	}
	s := strconv.FormatFloat(v, 'f', -1, 64)
	return &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!float", Value: s}
}

// CheckText refuses a table whose names are not UTF-8 text (a column, the table, a
// partition): a manifest is UTF-8, so its fragment could not hold them, and a JSON
// report would change them. file names where the names came from.
func CheckText(file string, t schema.SurveyTable) error {
	bad := func(what, s string) error {
		return fmt.Errorf("%s: %s %q is not UTF-8 text, which a manifest needs: rename it in the data (or the query)", file, what, strings.ToValidUTF8(s, "\uFFFD"))
	}
	if !utf8.ValidString(t.Name) {
		return fmt.Errorf("%s: the table name %q is not UTF-8 text, which a manifest needs: give one with --name", file, strings.ToValidUTF8(t.Name, "\uFFFD"))
	}
	if !utf8.ValidString(t.Partitions.Key) {
		return bad("the partition key", t.Partitions.Key)
	}
	for _, it := range t.Partitions.Items {
		if !utf8.ValidString(it.Name) {
			return bad("partition", it.Name)
		}
	}
	for _, c := range t.Columns {
		if !utf8.ValidString(c.Name) {
			return bad("column name", c.Name)
		}
	}
	return nil
}
