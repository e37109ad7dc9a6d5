package run

import (
	"errors"
	"fmt"
	"runtime"
	"sort"
	"sync"

	"github.com/scangate/scangate/internal/analysis"
	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/internal/units"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// Check loads and checks every input on a bounded pool of workers and returns the
// files sorted by name and the findings sorted (by file, line, column, rule), so every
// report lists files in one order whatever order the command line gave; unreadable and invalid files become
// schema findings and never stop the others. The run's partition budget
// (limits.MaxRunPartitions) is spent in input order, the same on every machine. It
// consumes the inputs: their bytes are released as they are loaded. Files keep their
// analysed tables only with keepTables (see NeedsTables).
func Check(inputs []Input, cfg rules.Config, proj *schema.ProjectConfig, limits schema.Limits, keepTables bool) ([]report.File, []rules.Finding) {
	files := make([]report.File, len(inputs))
	found := make([][]rules.Finding, len(inputs))
	root, paths := RepositoryRoot(), newFingerprintPaths()
	keys := make([]string, len(inputs))
	for i, in := range inputs {
		keys[i] = paths.key(in)
	}
	budget := newRunBudget(limits.MaxRunPartitions)
	// Each file is read, loaded and checked by one worker, so only the files in flight
	// hold their bytes and parse trees. A run of thousands of files keeps no more than
	// their findings, and their tables when a report prints them.
	parallel(len(inputs), func(i int) {
		files[i], found[i] = checkInput(inputs[i], root, keys[i], cfg, proj, limits, keepFor(keepTables), func(n int64) bool { return budget.spend(i, n) })
		inputs[i].data = nil
	})
	return sortChecked(files, found)
}

// sortChecked sorts the files by name and flattens and sorts their findings, as every
// report lists them.
func sortChecked(files []report.File, found [][]rules.Finding) ([]report.File, []rules.Finding) {
	sort.SliceStable(files, func(i, j int) bool { return files[i].Name < files[j].Name })
	n := 0
	for _, fs := range found {
		n += len(fs)
	}
	findings := make([]rules.Finding, 0, n) // exact: a run holds them to the end
	for _, fs := range found {
		findings = append(findings, fs...)
	}
	sort.SliceStable(findings, func(i, j int) bool { return rules.Less(findings[i], findings[j]) })
	return files, findings
}

// tableKeep is what a checked file keeps of its tables.
type tableKeep int

const (
	keepCount   tableKeep = iota // how many were analysed, nothing more
	keepRows                     // their rows without recommendations: what diff compares
	keepAdvised                  // their rows with every table's recommendation: reports that print tables
)

// keepFor is what check keeps: the advised rows when a report prints tables (NeedsTables).
func keepFor(keepTables bool) tableKeep {
	if keepTables {
		return keepAdvised
	}
	return keepCount
}

// checkInput loads and checks one input. spend is called exactly once, with the
// partitions the manifest expands to (0 when it did not load), and says whether they
// fit the run's budget; a manifest that does not fit is refused with a schema finding.
func checkInput(in Input, root, key string, cfg rules.Config, proj *schema.ProjectConfig, limits schema.Limits, keep tableKeep, spend func(int64) bool) (report.File, []rules.Finding) {
	f, m, fs := loadInput(in, root, key, proj, limits)
	var n int64
	if m != nil {
		n = m.Partitions()
	}
	if !spend(n) {
		f.Invalid = true
		return f, []rules.Finding{refusal(f.Name, n, limits)}
	}
	if m != nil {
		cfg.Advise = keep == keepAdvised // the reports that print tables print their recommendations
		md, own := rules.Check(m, cfg)
		fs = own
		f.Analysed = len(md.Tables)
		// The rows, not the analyses: a run over a repository holds every table to the end.
		switch keep {
		case keepAdvised:
			f.Tables = analysis.ReportRows(md.Tables) // each recommendation detached from its sweep
		case keepRows:
			f.Tables = analysis.Rows(md.Tables)
		}
	}
	return f, fs
}

// refusal is the finding that says why a file was not checked.
func refusal(file string, n int64, limits schema.Limits) rules.Finding {
	return rules.Finding{
		Rule: rules.Schema.ID, Severity: rules.Error, File: file, Subject: "run budget",
		Message: fmt.Sprintf("not checked: its %s partitions would take the run past %s partitions; check fewer files at once or raise --max-run-partitions",
			units.Num(n), units.Num(limits.MaxRunPartitions)),
	}
}

// runBudget is the run's partition budget, spent in input order whatever order the
// workers finish loading in, so the same files are refused on every machine.
type runBudget struct {
	mu    sync.Mutex
	turn  *sync.Cond
	next  int // the input whose turn it is
	spent int64
	limit int64
}

func newRunBudget(limit int64) *runBudget {
	b := &runBudget{limit: limit}
	b.turn = sync.NewCond(&b.mu)
	return b
}

// spend takes n partitions for input i once every input before it has spent its own,
// and reports whether they fitted. Every input spends exactly once (0 for one that did
// not load). parallel hands inputs out in order, so an earlier input is always held by
// a worker that will reach here: the wait ends.
func (b *runBudget) spend(i int, n int64) bool {
	b.mu.Lock()
	defer b.mu.Unlock()
	for b.next != i {
		b.turn.Wait()
	}
	ok := b.spent+n <= b.limit
	if ok {
		b.spent += n
	}
	b.next++
	b.turn.Broadcast()
	return ok
}

// parallel runs work(i) for i in 0..n-1 on at most GOMAXPROCS goroutines.
func parallel(n int, work func(i int)) {
	jobs := make(chan int)
	var wg sync.WaitGroup
	for w := 0; w < min(runtime.GOMAXPROCS(0), max(n, 1)); w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range jobs {
				work(i)
			}
		}()
	}
	for i := 0; i < n; i++ {
		jobs <- i
	}
	close(jobs)
	wg.Wait()
}

// loadInput reads and validates one input; an invalid one returns its schema findings and
// no manifest.
func loadInput(in Input, root, key string, proj *schema.ProjectConfig, limits schema.Limits) (report.File, *schema.Manifest, []rules.Finding) {
	f := report.File{Name: in.name, URI: RepositoryPath(root, in.name), Key: key}
	data, err := in.bytes()
	if err != nil {
		f.Invalid = true
		return f, nil, []rules.Finding{{
			Rule: rules.Schema.ID, Severity: rules.Error, File: in.name, Subject: "read",
			Message: fmt.Sprintf("cannot read the file: %v", err),
		}}
	}
	m, err := schema.LoadWith(in.name, data, schema.Options{Limits: limits, Project: proj})
	if err != nil {
		f.Invalid = true
		var se *schema.Error
		if errors.As(err, &se) {
			return f, nil, rules.SchemaFindings(se)
		}
		return f, nil, []rules.Finding{{Rule: rules.Schema.ID, Severity: rules.Error, File: in.name, Message: err.Error()}}
	}
	f.Model = m.Model
	return f, m, nil
}
