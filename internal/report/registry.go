package report

import (
	"fmt"
	"io"
	"sort"
	"strings"
	"time"

	"github.com/scangate/scangate/internal/analysis"
	"github.com/scangate/scangate/schema"
)

// Kind is what a report is about: one command's result.
type Kind uint8

// The kinds of report, as a bit set in Traits.Kinds.
const (
	CheckReport Kind = 1 << iota // check's findings and figures: *Result
	DiffReport                   // diff's comparison: *DiffResult
	PlanReport                   // plan's sweeps and forecasts: *Plan
)

func (k Kind) String() string {
	switch k {
	case CheckReport:
		return "check"
	case DiffReport:
		return "diff"
	case PlanReport:
		return "plan"
	}
	return fmt.Sprintf("kind(%d)", uint8(k))
}

// Doc is a document a format renders: *Result, *DiffResult or *Plan.
type Doc interface{ Kind() Kind }

func (*Result) Kind() Kind     { return CheckReport }
func (*DiffResult) Kind() Kind { return DiffReport }
func (*Plan) Kind() Kind       { return PlanReport }

// Plan is everything one run of scangate plan produced: the plans of each manifest,
// in the order the files were given or found.
type Plan struct {
	Version string // scangate's version, as `scangate version` prints it
	Files   []PlanFile
	Today   time.Time // the date the forecast counts from
	Horizon int       // months forecast, the same the recommendations are judged over
}

// PlanFile is the plans of the tables of one manifest.
type PlanFile struct {
	Manifest *schema.Manifest
	URI      string // path relative to the repository root, with forward slashes
	Plans    []analysis.TablePlan
}

// Traits say what a format renders and what it needs. Help text, flag validation and
// the driver read them; nothing else lists the formats.
type Traits struct {
	Name  string
	Kinds Kind // the documents it renders
	// NeedsTables: it prints per-table figures, so check keeps every analysed table to
	// the end for it, in brief (analysis.Row); a run that prints only findings keeps none.
	NeedsTables bool
	// Charts: it charts the front of each flagged table's sweep (analysis.Layouts), so
	// check's sweeps mark it (rules.Config.Charts); implies NeedsTables.
	Charts  bool
	Colours bool // colours its output on a terminal
	// StepSummary: in a CI job that names a step summary file, the Markdown rendering of
	// the same document is appended there too, and so needs the tables.
	StepSummary bool
}

// Format is one report format.
type Format interface {
	Traits() Traits
	// Render writes doc; color is set only for a terminal and only for a format that
	// colours. A document of a kind the format does not render is an error.
	Render(w io.Writer, doc Doc, color bool) error
}

// writers is a format built from one writer per kind it renders.
type writers struct {
	traits Traits
	check  func(io.Writer, *Result, bool) error
	diff   func(io.Writer, *DiffResult, bool) error
	plan   func(io.Writer, *Plan, bool) error
}

func (f writers) Traits() Traits { return f.traits }

func (f writers) Render(w io.Writer, doc Doc, color bool) error {
	color = color && f.traits.Colours
	switch d := doc.(type) {
	case *Result:
		if f.check != nil {
			return f.check(w, d, color)
		}
	case *DiffResult:
		if f.diff != nil {
			return f.diff(w, d, color)
		}
	case *Plan:
		if f.plan != nil {
			return f.plan(w, d, color)
		}
	}
	return fmt.Errorf("the %s format does not render %s reports", f.traits.Name, doc.Kind())
}

// register adds a format from its own file; the kinds it names must have writers.
func register(f writers) {
	for _, k := range []struct {
		kind Kind
		has  bool
	}{{CheckReport, f.check != nil}, {DiffReport, f.diff != nil}, {PlanReport, f.plan != nil}} {
		if (f.traits.Kinds&k.kind != 0) != k.has {
			panic("report: format " + f.traits.Name + " names the " + k.kind.String() + " kind without its writer, or the reverse")
		}
	}
	if _, dup := registry[f.traits.Name]; dup {
		panic("report: two formats named " + f.traits.Name)
	}
	registry[f.traits.Name] = f
}

var registry = map[string]Format{}

// Lookup finds the format called name that renders k.
func Lookup(name string, k Kind) (Format, bool) {
	f, ok := registry[name]
	if !ok || f.Traits().Kinds&k == 0 {
		return nil, false
	}
	return f, true
}

// Names lists the formats that render k: text first, the others by name.
func Names(k Kind) []string {
	var out []string
	for name, f := range registry {
		if f.Traits().Kinds&k != 0 {
			out = append(out, name)
		}
	}
	sort.Slice(out, func(i, j int) bool {
		if (out[i] == "text") != (out[j] == "text") {
			return out[i] == "text"
		}
		return out[i] < out[j]
	})
	return out
}

// NameList is Names(k) as help text writes it: "text, json, markdown".
func NameList(k Kind) string { return strings.Join(Names(k), ", ") }
