package advisor

import (
	"encoding/json"
	"fmt"
	"regexp"
	"strconv"
	"strings"

	"github.com/scangate/scangate/internal/units"

	"github.com/scangate/scangate/schema"
)

// Snippet is the manifest text that produces candidate c: the engine's segment
// capacity when it changes, and the table's partitions, indented as a manifest
// written in the documented style (two spaces, tables as a list).
func Snippet(c *Candidate) string {
	var b strings.Builder
	if c.Engine {
		fmt.Fprintf(&b, "engine:\n  segment_rows: %s\n", exactCount(c.SegmentRows))
	}
	fmt.Fprintf(&b, "tables:\n  - name: %s\n    partitions:\n", yamlString(c.Spec.Name))
	p := c.Spec.Partitions
	fmt.Fprintf(&b, "      scheme: %s\n", p.Scheme)
	switch p.Scheme {
	case schema.SchemeEven:
		fmt.Fprintf(&b, "      count: %d\n", p.Count)
	case schema.SchemeTime:
		b.WriteString("      tiers:\n")
		for _, t := range p.Tiers {
			fmt.Fprintf(&b, "        - {grain: %s, keep: %d}\n", t.Grain, t.Keep)
		}
	case schema.SchemeList:
		b.WriteString("      items:\n")
		for _, it := range p.Items {
			fmt.Fprintf(&b, "        - {name: %s, rows: %s}\n", yamlString(it.Name), exactCount(it.Rows))
		}
	}
	return b.String()
}

// exactCount writes n with a suffix when that reads back exactly, else in digits.
func exactCount(n int64) string {
	s := units.Count(n)
	if v, err := schema.ParseCount(s); err == nil && v == n {
		return s
	}
	return strconv.FormatInt(n, 10)
}

// plainName is a name YAML reads as a string without quotes: letters, digits and _ . -
// starting with a letter or _, and not a word YAML reads as a bool or null.
var plainName = regexp.MustCompile(`^[A-Za-z_][A-Za-z0-9_.-]*$`)

// yamlString writes a name plain when YAML reads it back as the same string, else
// quoted as a JSON string (which YAML reads alike), so "2025" stays a string.
func yamlString(s string) string {
	switch strings.ToLower(s) {
	case "y", "n", "yes", "no", "on", "off", "true", "false", "null":
	default:
		if plainName.MatchString(s) {
			return s
		}
	}
	q, _ := json.Marshal(s)
	return string(q)
}
