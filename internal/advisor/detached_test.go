package advisor

import (
	"reflect"
	"testing"
)

// A detached candidate, what a report row keeps, holds every exported figure of the
// candidate but its spec and warnings (which no report of a row reads) and nothing of
// the sweep's own state (the policy's expanded partitions and column figures, the
// misses' figures), which would keep the sweep alive to the end of a run over every
// table. A field added to Candidate fails here until Detached says what it keeps of it.
func TestDetachedKeepsTheFiguresOnly(t *testing.T) {
	c := Candidate{pol: &policy{}, missed: []Miss{{Key: "scan_ms"}}, rough: true}
	v := reflect.ValueOf(&c).Elem()
	for i := range v.NumField() {
		if f := v.Field(i); v.Type().Field(i).IsExported() {
			if fill(t, f, v.Type().Field(i).Name); f.IsZero() {
				t.Fatalf("cannot fill Candidate.%s", v.Type().Field(i).Name)
			}
		}
	}
	d := c.Detached()
	got := reflect.ValueOf(&d).Elem()
	dropped := map[string]bool{"Spec": true, "Warnings": true}
	for i := range v.NumField() {
		sf := v.Type().Field(i)
		switch {
		case !sf.IsExported():
			if sf.Name == "pol" || sf.Name == "missed" {
				if !got.Field(i).IsZero() {
					t.Errorf("Detached keeps the sweep's %s", sf.Name)
				}
			}
		case dropped[sf.Name]:
			if !got.Field(i).IsZero() {
				t.Errorf("Detached keeps Candidate.%s", sf.Name)
			}
		case !reflect.DeepEqual(got.Field(i).Interface(), v.Field(i).Interface()):
			t.Errorf("Detached drops Candidate.%s", sf.Name)
		}
	}
}

// fill sets f, as far as it can, to a value that is not its zero value.
func fill(t *testing.T, f reflect.Value, name string) {
	switch f.Kind() {
	case reflect.String:
		f.SetString("x")
	case reflect.Bool:
		f.SetBool(true)
	case reflect.Int, reflect.Int32, reflect.Int64:
		f.SetInt(7)
	case reflect.Float64:
		f.SetFloat(1.5)
	case reflect.Slice:
		f.Set(reflect.MakeSlice(f.Type(), 1, 1))
		fill(t, f.Index(0), name)
	case reflect.Struct: // one without exported fields (a time) stays zero
		for i := range f.NumField() {
			if f.Type().Field(i).IsExported() {
				fill(t, f.Field(i), name+"."+f.Type().Field(i).Name)
			}
		}
	case reflect.Pointer:
		f.Set(reflect.New(f.Type().Elem()))
		fill(t, f.Elem(), name)
	case reflect.Map:
		f.Set(reflect.MakeMap(f.Type()))
	default:
		t.Fatalf("cannot fill %s (%s)", name, f.Kind())
	}
}
