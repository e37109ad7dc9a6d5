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
	var b strings.Builder
	b.WriteString("m0: &m0 {k: 1}\n")
	for i := 1; i <= 9; i++ {
		fmt.Fprintf(&b, "m%d: &m%d {<<: [", i, i)
		for j := 0; j < 9; j++ {
			if j > 0 {
				b.WriteString(",")
			}
			fmt.Fprintf(&b, "*m%d", i-1)
		}
		b.WriteString("]}\n")
	}
	try("merge bomb 9", b.String())
}
