package yamledit

import (
	"errors"
	"maps"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"sort"
	"strings"
	"testing"

	"go.yaml.in/yaml/v3"
)

// corpus is every manifest under testdata and a few documents written for the odd
// corners, each also with CR LF line breaks, with a byte order mark, and with both.
func corpus(t *testing.T) map[string][]byte {
	t.Helper()
	out := map[string][]byte{
		"corners.yaml": []byte("# head\na: &A {x: 1, y: [1, 2]}\nb: *A\nc:\n  <<: *A\n  z: 'q' # zed\nd: |\n  text\n  more\ne:\n- 1\n- - 2\n  - 3\nf: plain\n  folded\ng:\nh: !!str 5\n"),
		"corners.json": []byte("{\n  \"a\": {\"x\": 1, \"y\": [1, 2.5e3, true, null]},\n  \"b\": [\n    {\"n\": \"\\u00e9\\/\"}\n  ],\n  \"c\": {}\n}\n"),
		// A key on the first line, where a byte order mark stands before it.
		"first-line.yaml": []byte("format: 1\nmodel: m\ntables:\n  - name: t # c\n    rows: 10\n"),
	}
	err := filepath.WalkDir("../../testdata", func(p string, e os.DirEntry, err error) error {
		if err != nil || e.IsDir() || !(strings.HasSuffix(p, ".yaml") || strings.HasSuffix(p, ".json")) || strings.Contains(p, "/bad") {
			return err
		}
		b, err := os.ReadFile(p)
		if err == nil && len(b) < 4000 {
			out[p] = b
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	// Variants of the base documents only: a map ranged over while it grows may or may
	// not yield the new entries, and once made the corpus differ from run to run.
	bases := slices.Sorted(maps.Keys(out))
	for _, name := range bases {
		b := string(out[name])
		crlf := !strings.Contains(b, "\r")
		if crlf {
			out[name+" (crlf)"] = []byte(strings.ReplaceAll(b, "\n", "\r\n"))
		}
		if strings.HasPrefix(b, bomBytes) {
			continue // a second mark is refused (TestExtraByteOrderMarks)
		}
		out[name+" (bom)"] = []byte(bomBytes + b)
		if crlf {
			out[name+" (crlf) (bom)"] = []byte(bomBytes + strings.ReplaceAll(b, "\n", "\r\n"))
		}
	}
	return out
}

// paths lists a path to every node of the tree that is reached without an alias.
// merging says the entry's mapping has a merge key: removing the entry may uncover a
// merged value.
func paths(n *yaml.Node, prefix []Step, keys []any, visit func(p []Step, keys []any, merging bool)) {
	switch n.Kind {
	case yaml.MappingNode:
		merging := len(mergedOnly(n).Content) > 0
		for i := 0; i+1 < len(n.Content); i += 2 {
			k := n.Content[i]
			if k.Kind != yaml.ScalarNode || k.Tag != "!!str" || k.Value == "<<" {
				continue
			}
			p := append(append([]Step(nil), prefix...), Key(k.Value))
			kp := append(append([]any(nil), keys...), k.Value)
			visit(p, kp, merging)
			paths(n.Content[i+1], p, kp, visit)
		}
	case yaml.SequenceNode:
		for i, c := range n.Content {
			p := append(append([]Step(nil), prefix...), Index(i))
			kp := append(append([]any(nil), keys...), i)
			visit(p, kp, false)
			paths(c, p, kp, visit)
		}
	}
}

// setAt returns v with the value at keys replaced by x (remove drops it instead).
func setAt(v any, keys []any, x any, remove bool) any {
	if len(keys) == 0 {
		return x
	}
	switch c := v.(type) {
	case map[string]any:
		out := make(map[string]any, len(c)+1)
		for k, e := range c {
			out[k] = e
		}
		k := keys[0].(string)
		if len(keys) == 1 && remove {
			delete(out, k)
		} else {
			out[k] = setAt(c[k], keys[1:], x, remove)
		}
		return out
	case []any:
		out := append([]any(nil), c...)
		i := keys[0].(int)
		if len(keys) == 1 && remove {
			return append(out[:i:i], out[i+1:]...)
		}
		out[i] = setAt(c[i], keys[1:], x, remove)
		return out
	}
	return v
}

func decoded(t *testing.T, d *Doc) any {
	t.Helper()
	v, err := Value(d.Root())
	if err != nil {
		t.Fatalf("the edited document does not decode: %v\n%s", err, d.Bytes())
	}
	return v
}

// TestEveryEdit sets every node of every corpus document to each of a few values, and
// removes it: an edit either is refused with an *Error and leaves the document as it
// was, or the document then decodes to the original with just that change, and every
// byte outside the recorded changes is as it was.
func TestEveryEdit(t *testing.T) {
	block, _ := Parsed("{a: 1, b: [2, {c: 3}]}")
	unflow(block)
	values := []*yaml.Node{Scalar(7), Scalar("two words: and # more"), Scalar(""), mustParse("{scheme: none}"), mustParse("[1, x]"), block}
	// Every edit is given the same nodes: the editor must not change them.
	kept := make([]*yaml.Node, len(values))
	for i, v := range values {
		kept[i] = deepCopy(v)
	}
	defer func() {
		for i, v := range values {
			if !reflect.DeepEqual(v, kept[i]) {
				t.Errorf("the value %s was changed by the edits made with it", inline(kept[i]))
			}
		}
	}()
	// In name order, so a failure recurs on the same document.
	docs := corpus(t)
	names := slices.Sorted(maps.Keys(docs))
	done, refused := 0, 0
	for _, name := range names {
		src := docs[name]
		isJSON := strings.Contains(name, ".json")
		orig, err := Parse(src, isJSON)
		if err != nil {
			t.Logf("%s: %v", name, err) // the loader refuses it too; nothing to edit
			continue
		}
		before := decoded(t, orig)
		paths(orig.Root(), nil, nil, func(p []Step, keys []any, merging bool) {
			try := func(what string, want any, f func(d *Doc) error) {
				d, _ := Parse(src, isJSON)
				err := f(d)
				var e *Error
				switch {
				case errors.As(err, &e):
					refused++
					if string(d.Bytes()) != string(src) {
						t.Fatalf("%s %s %s: refused but changed", name, pathWords(p), what)
					}
					return
				case err != nil:
					t.Fatalf("%s %s %s: %v", name, pathWords(p), what, err)
				}
				done++
				if got := decoded(t, d); !reflect.DeepEqual(got, want) {
					t.Fatalf("%s: %s %s reads\n%#v\nwant\n%#v\n%s", name, what, pathWords(p), got, want, d.Bytes())
				}
				if strings.HasPrefix(string(src), bomBytes) != strings.HasPrefix(string(d.Bytes()), bomBytes) {
					t.Fatalf("%s: the byte order mark was lost", name)
				}
				checkOutside(t, src, d)
			}
			for _, v := range values {
				x, _ := Value(v)
				try("set "+inline(v), setAt(before, keys, x, false), func(d *Doc) error { return d.Set(v, p...) })
			}
			if merging {
				return
			}
			try("delete", setAt(before, keys, nil, true), func(d *Doc) error { return d.Delete(p...) })
		})
	}
	t.Logf("%d edits made, %d refused", done, refused)
	batched := 0
	for _, name := range names {
		src := docs[name]
		isJSON := strings.Contains(name, ".json")
		d, err := Parse(src, isJSON)
		if err != nil {
			continue
		}
		want := decoded(t, d)
		d.Batch()
		paths(d.Root(), nil, nil, func(p []Step, keys []any, _ bool) {
			n, err := d.Find(p...)
			if err != nil || n == nil || n.Kind != yaml.ScalarNode {
				return
			}
			if d.SetScalar(int64(len(keys)), p...) == nil {
				want = setAt(want, keys, len(keys), false)
				batched++
			}
		})
		if err := d.Commit(); err != nil {
			t.Fatalf("%s: batch of every scalar: %v", name, err)
		}
		if got := decoded(t, d); !reflect.DeepEqual(got, want) {
			t.Fatalf("%s: the batch reads\n%#v\nwant\n%#v\n%s", name, got, want, d.Bytes())
		}
		checkOutside(t, src, d)
	}
	t.Logf("%d scalars set in batches", batched)
	if done < 1000 || refused > done/4 {
		t.Fatalf("%d edits made, %d refused: the corpus or the editor lost its reach", done, refused)
	}
}

func mustParse(s string) *yaml.Node {
	n, err := Parsed(s)
	if err != nil {
		panic(err)
	}
	return n
}

func deepCopy(n *yaml.Node) *yaml.Node {
	c := *n
	c.Content = nil
	for _, e := range n.Content {
		c.Content = append(c.Content, deepCopy(e))
	}
	return &c
}

func unflow(n *yaml.Node) {
	n.Style &^= yaml.FlowStyle
	for _, c := range n.Content {
		unflow(c)
	}
}

// FuzzSetText sets the first key of any document that parses to any value text.
func FuzzSetText(f *testing.F) {
	f.Add([]byte("a: 1 # c\nb: [x]\n"), "{p: q}", false)
	f.Add([]byte("a:\n  - x\n  - y\n"), "- z\n- w", false)
	f.Add([]byte("{\"a\": {\"b\": 1}}"), "[1, 2]", true)
	f.Add([]byte("a: |\n  t\nb: 'q'\n"), "5", false)
	f.Fuzz(func(t *testing.T, src []byte, text string, isJSON bool) {
		d, err := Parse(src, isJSON)
		if err != nil || d.Root().Kind != yaml.MappingNode || len(d.Root().Content) < 2 || d.Root().Content[0].Kind != yaml.ScalarNode {
			return
		}
		before, err := Value(d.Root())
		if err != nil {
			return
		}
		if _, ok := before.(map[string]any); !ok {
			return
		}
		key := d.Root().Content[0].Value
		v, err := Parsed(text)
		if err != nil {
			return
		}
		x, err := Value(v)
		if err != nil {
			return
		}
		err = d.SetText(text, Key(key))
		var e *Error
		if errors.As(err, &e) {
			if string(d.Bytes()) != string(src) {
				t.Fatalf("refused but changed")
			}
			return
		}
		if err != nil {
			t.Fatal(err)
		}
		got, err := Value(d.Root())
		if err != nil {
			t.Fatalf("edited document does not decode: %v", err)
		}
		if want := setAt(before, []any{key}, x, false); !reflect.DeepEqual(got, want) {
			t.Fatalf("got %#v want %#v\n%s", got, want, d.Bytes())
		}
		checkOutside(t, src, d)
	})
}

// The corpus is the same on every call: a variant is made of each base document only
// (once a document with a byte order mark and CR LF breaks came and went with map
// iteration order, and documents with two marks with it).
func TestCorpusIsFixed(t *testing.T) {
	names := func() []string {
		var out []string
		for name := range corpus(t) {
			if strings.Count(name, "(bom)") > 1 || strings.Count(name, "(crlf)") > 1 {
				t.Errorf("%s: a variant of a variant", name)
			}
			out = append(out, name)
		}
		sort.Strings(out)
		return out
	}
	first := names()
	for range 5 {
		if again := names(); !slices.Equal(again, first) {
			t.Fatalf("the corpus changed between calls: %d documents, then %d", len(first), len(again))
		}
	}
}
