package schema

import (
	"encoding/json"
	"fmt"
	"maps"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"

	"go.yaml.in/yaml/v3"
)

// The quick check answers one question about a document, "does it match the schema?",
// without collecting errors. It runs first on every load: the JSON Schema library spends
// as long on a valid manifest as the YAML parser does, building error trees and exact
// rationals nobody reads. Only what the quick check cannot pass goes to the library,
// which also words the errors, so the library alone decides what is invalid. The quick
// check reads the same embedded schema, never a copy of its rules, and answers
// "unsure" for anything it cannot decide exactly; tests compare its verdicts with the
// library's over every file under testdata and under fuzzing.

// verdict is a quick check's answer for one value.
type verdict int8

const (
	fails verdict = iota
	unsure
	passes
)

// and is the verdict of two checks that must both pass.
func (v verdict) and(w verdict) verdict { return min(v, w) }

// not is the verdict of a "not" schema.
func (v verdict) not() verdict { return passes - v }

// quick is one schema compiled for the quick check. A nil *quick is the true schema.
type quick struct {
	never      bool    // the false schema
	types      typeSet // 0: any type
	constant   any
	hasConst   bool
	enum       []any
	minimum    *float64
	maximum    *float64
	exclMin    *float64
	minLength  int
	maxLength  int // -1 for none
	pattern    *regexp.Regexp
	required   []string
	properties map[string]*quick
	props      []namedQuick // properties in name order, to walk without ranging over a map
	extra      *quick       // additionalProperties
	noExtra    bool         // additionalProperties: false
	names      *quick       // propertyNames
	items      *quick
	minItems   int
	ref        *quick
	allOf      []*quick
	notS       *quick
	ifS        *quick
	thenS      *quick
	elseS      *quick
	hasIf      bool
}

type namedQuick struct {
	name string
	q    *quick
}

// annotations are keywords that never change whether a value is valid.
var annotations = map[string]bool{
	"$schema": true, "$id": true, "$comment": true, "$defs": true,
	"title": true, "description": true, "default": true, "examples": true,
}

// quickCompiler compiles the schemas of one document, each $ref target once.
type quickCompiler struct {
	root any
	refs map[string]*quick
}

// compileQuick compiles a schema document (as jsonschema.UnmarshalJSON reads it). It
// refuses keywords it does not implement, so a schema change that needs more fails the
// tests instead of being passed over.
func compileQuick(doc any) (*quick, error) {
	c := &quickCompiler{root: doc, refs: map[string]*quick{}}
	return c.compile(doc, "#")
}

func (c *quickCompiler) compile(s any, at string) (*quick, error) {
	switch s := s.(type) {
	case bool:
		if s {
			return nil, nil
		}
		return &quick{never: true}, nil
	case map[string]any:
		return c.object(s, at)
	}
	return nil, fmt.Errorf("%s: a schema is an object or a boolean", at)
}

func (c *quickCompiler) object(s map[string]any, at string) (*quick, error) {
	q := &quick{maxLength: -1}
	keys := make([]string, 0, len(s))
	for k := range s {
		keys = append(keys, k)
	}
	slices.Sort(keys) // the first error is the same on every run
	sub := func(k string) (*quick, error) { return c.compile(s[k], at+"/"+k) }
	num := func(k string) (*float64, error) {
		f, ok := exactFloat(s[k])
		if !ok {
			return nil, fmt.Errorf("%s/%s: not a number the quick check compares exactly", at, k)
		}
		return &f, nil
	}
	var err error
	for _, k := range keys {
		v := s[k]
		switch {
		case annotations[k]:
		case k == "type":
			names := []any{v}
			if list, ok := v.([]any); ok {
				names = list
			}
			for _, e := range names {
				name, _ := e.(string)
				bit, ok := typeBits[name]
				if !ok {
					return nil, fmt.Errorf("%s/type: unknown type %v", at, e)
				}
				q.types |= bit
			}
		case k == "const":
			q.constant, q.hasConst = v, true
		case k == "enum":
			q.enum, _ = v.([]any)
		case k == "minimum":
			q.minimum, err = num(k)
		case k == "maximum":
			q.maximum, err = num(k)
		case k == "exclusiveMinimum":
			q.exclMin, err = num(k)
		case k == "minLength":
			q.minLength, err = whole(v)
		case k == "maxLength":
			q.maxLength, err = whole(v)
		case k == "minItems":
			q.minItems, err = whole(v)
		case k == "pattern":
			text, _ := v.(string)
			q.pattern, err = regexp.Compile(text)
		case k == "required":
			for _, e := range v.([]any) {
				name, _ := e.(string)
				q.required = append(q.required, name)
			}
		case k == "properties":
			props, _ := v.(map[string]any)
			q.properties = make(map[string]*quick, len(props))
			for _, name := range slices.Sorted(maps.Keys(props)) {
				if q.properties[name], err = c.compile(props[name], at+"/properties/"+name); err != nil {
					return nil, err
				}
				q.props = append(q.props, namedQuick{name, q.properties[name]})
			}
		case k == "additionalProperties":
			if b, ok := v.(bool); ok && !b {
				q.noExtra = true
			} else {
				q.extra, err = sub(k)
			}
		case k == "items":
			q.items, err = sub(k)
		case k == "propertyNames":
			q.names, err = sub(k)
		case k == "allOf":
			for i, e := range v.([]any) {
				var a *quick
				if a, err = c.compile(e, fmt.Sprintf("%s/allOf/%d", at, i)); err != nil {
					return nil, err
				}
				q.allOf = append(q.allOf, a)
			}
		case k == "not":
			q.notS, err = sub(k)
			if err == nil && q.notS == nil {
				q.never = true // not true: nothing matches
			}
		case k == "if":
			q.hasIf = true
			q.ifS, err = sub(k)
		case k == "then":
			q.thenS, err = sub(k)
		case k == "else":
			q.elseS, err = sub(k)
		case k == "$ref":
			ref, _ := v.(string)
			q.ref, err = c.resolve(ref)
		default:
			return nil, fmt.Errorf("%s: keyword %q is not implemented by the quick check", at, k)
		}
		if err != nil {
			return nil, err
		}
	}
	return q, nil
}

// resolve compiles a "#/..." reference into the same document, once.
func (c *quickCompiler) resolve(ref string) (*quick, error) {
	if q, ok := c.refs[ref]; ok {
		return q, nil
	}
	if !strings.HasPrefix(ref, "#/") {
		return nil, fmt.Errorf("$ref %q: only references into the same document are implemented", ref)
	}
	var target any = c.root
	for _, tok := range splitPointer(ref[1:]) {
		m, ok := target.(map[string]any)
		if !ok {
			return nil, fmt.Errorf("$ref %q: no such schema", ref)
		}
		if target, ok = m[tok]; !ok {
			return nil, fmt.Errorf("$ref %q: no such schema", ref)
		}
	}
	// Registered before it is compiled, so a schema that refers to itself ends.
	q := &quick{maxLength: -1}
	c.refs[ref] = q
	compiled, err := c.compile(target, ref)
	if err != nil {
		return nil, err
	}
	if compiled != nil { // nil is the true schema, which q already is
		*q = *compiled
	}
	return q, nil
}

func whole(v any) (int, error) {
	n, ok := v.(json.Number)
	if !ok {
		return 0, fmt.Errorf("%v is not a whole number", v)
	}
	i, err := strconv.Atoi(string(n))
	return i, err
}

// exactFloat reads a JSON number whose float64 orders and compares exactly like the
// decimal it was written as: an optional sign, then at most 15 digits in all and no
// exponent. Such decimals lie between 1e-15 and 1e15 with 15 significant digits at
// most, so distinct ones stay distinct and ordered as float64s.
func exactFloat(v any) (float64, bool) {
	n, ok := v.(json.Number)
	if !ok {
		return 0, false
	}
	s := string(n)
	digits := 0
	for i := 0; i < len(s); i++ {
		switch c := s[i]; {
		case c >= '0' && c <= '9':
			digits++
		case c == '.' || (c == '-' && i == 0):
		default:
			return 0, false
		}
	}
	if digits > 15 {
		return 0, false
	}
	f, err := strconv.ParseFloat(s, 64)
	return f, err == nil
}

// isInteger is whether a JSON number is an integer, when that is plain from its digits.
func isInteger(n json.Number) verdict {
	s := strings.TrimPrefix(string(n), "-")
	if s == "" {
		return unsure
	}
	for i := 0; i < len(s); i++ {
		if s[i] < '0' || s[i] > '9' {
			return unsure // 1.0 and 1e3 are integers too; the library decides those
		}
	}
	return passes
}

// unboxed is a scalar value of either form as a scal; ok is false for a mapping or a
// sequence.
func unboxed(v any) (scal, bool) {
	switch v := v.(type) {
	case *yaml.Node:
		return nodeScalar(v), true
	case string:
		return scal{kind: tString, text: v}, true
	case json.Number:
		return scal{kind: tNumber, text: string(v)}, true
	case bool:
		return scal{kind: tBoolean, b: v}, true
	case nil:
		return scal{kind: tNull}, true
	}
	return scal{}, false
}

// equal compares a document value with a const or enum value of the schema.
func equal(v, want any) verdict {
	sc, isScalar := unboxed(v)
	return equalScalar(sc, isScalar, want)
}

// equalScalar is equal of a value already unboxed: an enum compares one value with
// each of its members.
func equalScalar(sc scal, isScalar bool, want any) verdict {
	switch w := want.(type) {
	case string:
		return truth(isScalar && sc.kind == tString && sc.text == w)
	case bool:
		return truth(isScalar && sc.kind == tBoolean && sc.b == w)
	case nil:
		return truth(isScalar && sc.kind == tNull)
	case json.Number:
		if !isScalar || sc.kind != tNumber {
			return truth(false)
		}
		n := json.Number(sc.text)
		if n == w {
			return passes
		}
		if isInteger(n) == passes && isInteger(w) == passes && canonical(n) && canonical(w) {
			return fails
		}
		return unsure
	}
	return unsure
}

// canonical is an integer written without leading zeros or "-0".
func canonical(n json.Number) bool {
	s := strings.TrimPrefix(string(n), "-")
	return (s == "0" && len(n) == 1) || (s != "" && s[0] != '0')
}

func truth(b bool) verdict {
	if b {
		return passes
	}
	return fails
}

// check is the quick verdict for v, a value of the tree in either form: built
// (map[string]any, []any) or viewed (obj, list), with string, bool, nil, json.Number.
func (q *quick) check(v any) verdict {
	if q == nil {
		return passes
	}
	if q.never {
		return fails
	}
	// A scalar is unboxed once for every keyword that reads it.
	var sc scal
	isScalar := false
	switch v.(type) {
	case map[string]any, []any, obj, list:
	case *yaml.Node, string, bool, nil, json.Number:
		sc, isScalar = unboxed(v)
	default:
		return unsure // not a value the tree holds
	}
	r := q.typeOK(v, sc, isScalar)
	if r == fails {
		return fails
	}
	if q.hasConst {
		if r = r.and(equalScalar(sc, isScalar, q.constant)); r == fails {
			return fails
		}
	}
	if q.enum != nil {
		best := fails
		for _, e := range q.enum {
			best = max(best, equalScalar(sc, isScalar, e))
		}
		if r = r.and(best); r == fails {
			return fails
		}
	}
	switch v := v.(type) {
	case json.Number:
		r = r.and(q.number(v))
	case string:
		r = r.and(q.text(v))
	case *yaml.Node:
		switch sc.kind {
		case tNumber:
			r = r.and(q.number(json.Number(sc.text)))
		case tString:
			r = r.and(q.text(sc.text))
		}
	case map[string]any:
		r = r.and(q.object(builtObject(v)))
	case obj:
		r = r.and(q.object(v))
	case []any:
		r = r.and(q.array(builtList(v)))
	case list:
		r = r.and(q.array(v))
	}
	if r == fails {
		return fails
	}
	if q.ref != nil {
		if r = r.and(q.ref.check(v)); r == fails {
			return fails
		}
	}
	for _, a := range q.allOf {
		if r = r.and(a.check(v)); r == fails {
			return fails
		}
	}
	if q.notS != nil {
		if r = r.and(q.notS.check(v).not()); r == fails {
			return fails
		}
	}
	if q.hasIf {
		switch q.ifS.check(v) {
		case passes:
			r = r.and(q.thenS.check(v))
		case fails:
			r = r.and(q.elseS.check(v))
		default:
			r = r.and(unsure)
		}
	}
	return r
}

// typeSet is a set of JSON Schema types, one bit each.
type typeSet uint8

const (
	tObject typeSet = 1 << iota
	tArray
	tString
	tBoolean
	tNull
	tNumber
	tInteger
)

var typeBits = map[string]typeSet{"object": tObject, "array": tArray, "string": tString,
	"boolean": tBoolean, "null": tNull, "number": tNumber, "integer": tInteger}

// typeOK checks v's type; sc is v unboxed when isScalar.
func (q *quick) typeOK(v any, sc scal, isScalar bool) verdict {
	if q.types == 0 {
		return passes
	}
	var bit typeSet
	switch v.(type) {
	case map[string]any, obj:
		bit = tObject
	case []any, list:
		bit = tArray
	default:
		if !isScalar {
			sc, _ = unboxed(v)
		}
		if sc.kind == tNumber {
			if q.types&tNumber != 0 {
				return passes
			}
			if q.types&tInteger != 0 {
				return isInteger(json.Number(sc.text)) // passes or unsure, never a definite no
			}
			return fails
		}
		bit = sc.kind
	}
	return truth(q.types&bit != 0)
}

func (q *quick) number(n json.Number) verdict {
	if q.minimum == nil && q.maximum == nil && q.exclMin == nil {
		return passes
	}
	f, ok := exactFloat(n)
	if !ok {
		return unsure
	}
	return truth((q.minimum == nil || f >= *q.minimum) &&
		(q.maximum == nil || f <= *q.maximum) &&
		(q.exclMin == nil || f > *q.exclMin))
}

func (q *quick) text(s string) verdict {
	if q.minLength > 0 || q.maxLength >= 0 {
		n := utf8.RuneCountInString(s)
		if n < q.minLength || (q.maxLength >= 0 && n > q.maxLength) {
			return fails
		}
	}
	return truth(q.pattern == nil || q.pattern.MatchString(s))
}

// object is a mapping in either form.
type object interface {
	member(key string) (any, bool)
	size() int
	each(yield func(key string, v any) bool)
}

// builtObject and builtList are the built tree's forms of object and array.
type (
	builtObject map[string]any
	builtList   []any
)

func (m builtObject) member(key string) (any, bool) { v, ok := m[key]; return v, ok }
func (m builtObject) get(key string) (any, bool)    { return m.member(key) }
func (m builtObject) size() int                     { return len(m) }
func (m builtObject) each(yield func(string, any) bool) {
	for k, v := range m {
		if !yield(k, v) {
			return
		}
	}
}

func (o obj) each(yield func(string, any) bool) {
	for k, n := range o.members() {
		if !yield(k, rawValue(n)) {
			return
		}
	}
}

func (a builtList) size() int      { return len(a) }
func (a builtList) elem(i int) any { return a[i] }

func (q *quick) object(m object) verdict {
	for _, k := range q.required {
		if _, ok := m.member(k); !ok {
			return fails
		}
	}
	// The schema's properties are few: look each up rather than range over the value.
	r, known := passes, 0
	for _, p := range q.props {
		if v, ok := m.member(p.name); ok {
			known++
			if r = r.and(p.q.check(v)); r == fails {
				return fails
			}
		}
	}
	if q.names == nil && (q.extra == nil && !q.noExtra || known == m.size()) {
		return r // nothing said about other keys, or no other keys
	}
	if q.noExtra && q.names == nil {
		return fails // a key the schema does not name
	}
	return r.and(q.others(m))
}

// others judges the keys of m the schema does not name, and every key's name. (Apart
// from object, so the verdict object keeps is not captured by the visit and stays on
// the stack: object runs for every mapping of every file.)
func (q *quick) others(m object) verdict {
	r := passes
	m.each(func(k string, v any) bool {
		if q.names != nil {
			if r = r.and(q.names.check(k)); r == fails {
				return false
			}
		}
		if _, named := q.properties[k]; named {
			return true
		}
		if q.noExtra {
			r = fails
			return false
		}
		r = r.and(q.extra.check(v))
		return r != fails
	})
	return r
}

func (q *quick) array(a interface {
	size() int
	elem(int) any
}) verdict {
	if a.size() < q.minItems {
		return fails
	}
	r := passes
	if q.items == nil {
		return r
	}
	for i := range a.size() {
		if r = r.and(q.items.check(a.elem(i))); r == fails {
			return fails
		}
	}
	return r
}
