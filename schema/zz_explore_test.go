package schema_test

import (
	"fmt"
	"strings"
	"testing"
	"time"

	"github.com/scangate/scangate/schema"
)

func try(name, in string) {
	start := time.Now()
	_, err := schema.Load("x", []byte(in), schema.DefaultLimits)
	s := fmt.Sprint(err)
	if len(s) > 300 {
		s = s[:300]
	}
	fmt.Printf("%s (%v) -> %s\n", name, time.Since(start), s)
}

func TestExplore(t *testing.T) {
	try("cycle seq", "a: &x [*x]\n")
	var b strings.Builder
	b.WriteString("a0: &a0 [x,x,x,x,x,x,x,x,x]\n")
	for i := 1; i <= 9; i++ {
		fmt.Fprintf(&b, "a%d: &a%d [", i, i)
		for j := 0; j < 9; j++ {
			if j > 0 {
				b.WriteString(",")
			}
			fmt.Fprintf(&b, "*a%d", i-1)
		}
		b.WriteString("]\n")
	}
	try("bomb", b.String())
	try("deep", strings.Repeat("[", 200)+strings.Repeat("]", 200)+"\n")
	try("deep map", "format: 1\nmodel: "+strings.Repeat("[", 200)+strings.Repeat("]", 200)+"\n")
	try("bom", "\xef\xbb\xbfformat: 1\n")
	try("utf16", "\xff\xfef\x00o\x00")
	try("nul", "format: 1\nmodel: a\x00b\n")
	try("badutf8", "format: 1\nmodel: a\xffb\n")
	try("doc-empty", "---\n")
	try("cycle merge", "a: &x {<<: *x}\n")
}
