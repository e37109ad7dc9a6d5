package run

import (
	"reflect"
	"testing"

	"github.com/scangate/scangate/internal/advisor"
)

// printed copies every exported field of a candidate: a field added to advisor.Candidate
// fails here until printed copies it (or says why it need not).
func TestPrintedCopiesExportedFields(t *testing.T) {
	var c advisor.Candidate
	v := reflect.ValueOf(&c).Elem()
	for i := range v.NumField() {
		if f := v.Field(i); v.Type().Field(i).IsExported() {
			if fill(t, f, v.Type().Field(i).Name); f.IsZero() {
				t.Fatalf("cannot fill Candidate.%s", v.Type().Field(i).Name)
			}
		}
	}
	got := reflect.ValueOf(printed(&c)).Elem()
	for i := range v.NumField() {
		sf := v.Type().Field(i)
		if sf.IsExported() && !reflect.DeepEqual(got.Field(i).Interface(), v.Field(i).Interface()) {
			t.Errorf("printed drops Candidate.%s", sf.Name)
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
