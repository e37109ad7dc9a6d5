package report

import (
	"bytes"
	"encoding/json"
	"io"
	"iter"
	"reflect"
	"strings"
	"sync"

	"github.com/scangate/scangate/internal/escape"
)

// The JSON reports are written as they are built: a list a report may hold thousands of
// (files, tables, findings) is a jsonSeq, whose elements are built and written one at a
// time, so neither the report's values nor its bytes are ever held whole. The bytes are
// those encoding/json writes for the same values with two-space indentation and HTML left
// unescaped, then escape.JSON: each element is encoded by encoding/json at its depth, and
// only the punctuation between elements is written here. Structs holding a jsonSeq are
// walked field by field (json tags and omitempty as encoding/json reads them); everything
// else goes to encoding/json whole, so a field added to a report struct needs nothing here.

// jsonSeq is a list the JSON writer streams.
type jsonSeq[T any] iter.Seq[T]

// seqOf streams a slice's elements, each converted as it is written.
func seqOf[S ~[]E, E, T any](s S, conv func(E) T) jsonSeq[T] {
	return func(yield func(T) bool) {
		for _, e := range s {
			if !yield(conv(e)) {
				return
			}
		}
	}
}

func (s jsonSeq[T]) each(f func(any) bool) {
	if s != nil {
		s(func(v T) bool { return f(v) })
	}
}

// streamed is a jsonSeq of any element type.
type streamed interface{ each(func(any) bool) }

var streamedType = reflect.TypeFor[streamed]()

// jsonWriter writes one indented JSON document to w; the first error stops it.
type jsonWriter struct {
	w   io.Writer
	err error
	buf bytes.Buffer
	enc *json.Encoder
	at  int // the depth enc's prefix is set for
}

// encodeJSON writes doc as indented JSON with a final newline; hidden runes the encoder
// leaves raw are written as \u escapes (escape.JSON), which read back the same.
func encodeJSON(w io.Writer, doc any) error {
	jw := &jsonWriter{w: w, at: -1}
	jw.enc = json.NewEncoder(&jw.buf)
	jw.enc.SetEscapeHTML(false)
	jw.value(reflect.ValueOf(doc), 0)
	jw.raw("\n")
	return jw.err
}

func (jw *jsonWriter) raw(s string) {
	if jw.err == nil {
		_, jw.err = io.WriteString(jw.w, s)
	}
}

func (jw *jsonWriter) newline(depth int) { jw.raw("\n" + strings.Repeat("  ", depth)) }

// value writes v at depth: streamed lists and the structs holding them here, the rest
// through encoding/json.
func (jw *jsonWriter) value(v reflect.Value, depth int) {
	if jw.err != nil {
		return
	}
	for v.Kind() == reflect.Interface && !v.IsNil() {
		v = v.Elem()
	}
	switch {
	case v.IsValid() && v.Type().Implements(streamedType):
		jw.list(v.Interface().(streamed), depth)
	case v.Kind() == reflect.Struct && holdsStream(v.Type()):
		jw.object(v, depth)
	default:
		jw.encoded(v, depth)
	}
}

// member starts the n-th member of an array or object opened by open ("[" or "{").
func (jw *jsonWriter) member(n *int, open string, depth int) {
	if *n > 0 {
		jw.raw(",")
	} else {
		jw.raw(open)
	}
	*n++
	jw.newline(depth + 1)
}

// end closes an array or object of n members: "[]" or "{}" when it has none.
func (jw *jsonWriter) end(n int, open, close string, depth int) {
	if n == 0 {
		jw.raw(open + close)
		return
	}
	jw.newline(depth)
	jw.raw(close)
}

func (jw *jsonWriter) list(s streamed, depth int) {
	n := 0
	s.each(func(e any) bool {
		jw.member(&n, "[", depth)
		jw.value(reflect.ValueOf(e), depth+1)
		return jw.err == nil
	})
	jw.end(n, "[", "]", depth)
}

func (jw *jsonWriter) object(v reflect.Value, depth int) {
	n := 0
	for _, f := range fieldsOf(v.Type()) {
		fv := v.Field(f.index)
		if f.omitEmpty && isEmptyJSON(fv) {
			continue
		}
		jw.member(&n, "{", depth)
		jw.raw(f.key)
		jw.value(fv, depth+1)
	}
	jw.end(n, "{", "}", depth)
}

// encoded writes v as encoding/json indents it at depth.
func (jw *jsonWriter) encoded(v reflect.Value, depth int) {
	if depth != jw.at {
		jw.enc.SetIndent(strings.Repeat("  ", depth), "  ")
		jw.at = depth
	}
	jw.buf.Reset()
	var x any
	if v.IsValid() {
		x = v.Interface()
	}
	if err := jw.enc.Encode(x); err != nil {
		jw.err = err
		return
	}
	out := bytes.TrimSuffix(jw.buf.Bytes(), []byte("\n"))
	if jw.err == nil {
		_, jw.err = jw.w.Write(escape.JSON(out))
	}
}

// jsonField is one member of a struct the writer walks: its index, its encoded key with
// the separator (`"name": `) and whether it is left out when empty.
type jsonField struct {
	index     int
	key       string
	omitEmpty bool
}

var fieldCache sync.Map // reflect.Type -> []jsonField

// fieldsOf lists a struct's members as encoding/json names them; only exported fields
// without embedding are supported, which is all the report structs use.
func fieldsOf(t reflect.Type) []jsonField {
	if fs, ok := fieldCache.Load(t); ok {
		return fs.([]jsonField)
	}
	var fs []jsonField
	for i := range t.NumField() {
		sf := t.Field(i)
		if !sf.IsExported() || sf.Anonymous {
			continue
		}
		name, opts, _ := strings.Cut(sf.Tag.Get("json"), ",")
		if name == "-" && opts == "" {
			continue
		}
		if name == "" {
			name = sf.Name
		}
		key, _ := json.Marshal(name)
		fs = append(fs, jsonField{index: i, key: string(key) + ": ", omitEmpty: hasOpt(opts, "omitempty")})
	}
	fieldCache.Store(t, fs)
	return fs
}

func hasOpt(opts, want string) bool {
	for opts != "" {
		var o string
		o, opts, _ = strings.Cut(opts, ",")
		if o == want {
			return true
		}
	}
	return false
}

// holdsStream is whether a struct type has a streamed member, at any depth of structs.
func holdsStream(t reflect.Type) bool {
	for _, f := range fieldsOf(t) {
		ft := t.Field(f.index).Type
		if ft.Implements(streamedType) || ft.Kind() == reflect.Struct && holdsStream(ft) {
			return true
		}
	}
	return false
}

// isEmptyJSON is encoding/json's test for omitempty.
func isEmptyJSON(v reflect.Value) bool {
	switch v.Kind() {
	case reflect.Array, reflect.Map, reflect.Slice, reflect.String:
		return v.Len() == 0
	case reflect.Bool, reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64,
		reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64, reflect.Uintptr,
		reflect.Float32, reflect.Float64:
		return v.IsZero()
	case reflect.Interface, reflect.Pointer, reflect.Func:
		return v.IsNil()
	}
	return false
}
