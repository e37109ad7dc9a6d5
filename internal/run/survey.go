package run

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"time"

	"github.com/scangate/scangate/internal/datafile"
	"github.com/scangate/scangate/internal/escape"
	"github.com/scangate/scangate/internal/survey"
	"github.com/scangate/scangate/internal/yamledit"
	"github.com/scangate/scangate/schema"
)

// SurveyOptions are survey's flags.
type SurveyOptions struct {
	Data        []string // data files and folders
	Name        string   // the table's name; default: the first data argument's base name
	PartitionBy string
	Grain       string
	Format      string // yaml (the manifest fragment) or json (schema/survey.schema.json)
	Into        string // a manifest to add the table to or replace it in
	SQL         string // print the survey query of this table instead of reading data
	Dialect     string
	Columns     string          // NAME:TYPE,... for --sql
	FromResult  string          // the query's result as CSV
	MaxDataSize string          // --max-data-size, a byte size
	DataLimits  datafile.Limits // MaxDataSize sets MaxFileBytes
	Manifest    schema.Limits   // bounds the manifest (--into) and the result file
	Stdin       io.Reader
	Stdout      io.Writer
	Stderr      io.Writer
	// Progress draws a bar on stderr (a terminal, not CI); Lines prints one plain line
	// per file (CI). At most one is set.
	Progress, Lines bool
}

// Survey runs `scangate survey`: it prints the SQL query, or measures the data (or the
// query's result) and prints the fragment, or with Into writes it into the manifest.
func Survey(o SurveyOptions) error {
	if o.MaxDataSize != "" {
		n, err := schema.ParseBytes(o.MaxDataSize)
		if err != nil || n < 1 {
			return fmt.Errorf("--max-data-size %q: give a size such as 100GiB", o.MaxDataSize)
		}
		o.DataLimits = datafile.DefaultLimits
		o.DataLimits.MaxFileBytes = n
	}
	if o.Format != "yaml" && o.Format != "json" {
		return fmt.Errorf("--format %q: use yaml (the manifest fragment) or json (for check --observed)", o.Format)
	}
	if o.Grain != "" && !validGrain(o.Grain) {
		return fmt.Errorf("--grain %q: use one of %s", o.Grain, strings.Join(survey.Grains, ", "))
	}
	if o.Grain != "" && o.PartitionBy == "" && o.SQL != "" {
		return errors.New("--grain needs --partition-by: the column whose dates are folded into periods")
	}
	modes := 0
	for _, on := range []bool{len(o.Data) > 0, o.SQL != "", o.FromResult != ""} {
		if on {
			modes++
		}
	}
	if modes != 1 {
		return errors.New("give data files or folders, or --sql TABLE, or --from-result FILE.csv: exactly one of them")
	}
	if o.SQL != "" {
		return printQuery(o)
	}
	var t schema.SurveyTable
	var err error
	if o.FromResult != "" {
		if o.PartitionBy != "" || o.Grain != "" {
			return errors.New("--from-result reads the partition key and grain from the result; --partition-by and --grain belong to --sql")
		}
		var name string
		var data []byte
		if name, data, err = ReadInput(o.FromResult, o.Stdin, o.Manifest.MaxFileBytes); err != nil {
			return err
		}
		if t, err = survey.FromResult(name, data); err != nil {
			return err
		}
		if o.Name != "" {
			t.Name = o.Name
		}
	} else if t, err = surveyData(o); err != nil {
		return err
	}
	if err := survey.CheckText(surveySource(o), t); err != nil {
		return err
	}
	if o.Into != "" {
		return writeInto(o, t)
	}
	out := survey.Fragment([]schema.SurveyTable{t})
	if o.Format == "json" {
		out = survey.JSON([]schema.SurveyTable{t})
	}
	_, err = o.Stdout.Write(out)
	return err
}

// surveySource names where a survey's figures came from, for its errors.
func surveySource(o SurveyOptions) string {
	if o.FromResult != "" {
		return o.FromResult
	}
	return strings.Join(o.Data, ", ")
}

func validGrain(g string) bool {
	for _, n := range survey.Grains {
		if n == g {
			return true
		}
	}
	return false
}

func printQuery(o SurveyOptions) error {
	d, err := survey.LookupDialect(o.Dialect)
	if err != nil {
		return err
	}
	if o.Columns == "" {
		return errors.New("--sql needs --columns NAME:TYPE,... (the columns to measure, with their manifest types)")
	}
	cols, err := survey.ParseSQLColumns(o.Columns)
	if err != nil {
		return err
	}
	_, err = io.WriteString(o.Stdout, survey.Query(o.SQL, cols, o.PartitionBy, o.Grain, d))
	return err
}

// surveyData measures the data files.
func surveyData(o SurveyOptions) (schema.SurveyTable, error) {
	files, err := datafile.Find(o.Data, o.DataLimits)
	if err != nil {
		return schema.SurveyTable{}, err
	}
	if o.Grain != "" && o.PartitionBy == "" && len(files[0].Keys) == 0 {
		return schema.SurveyTable{}, fmt.Errorf("--grain %s needs a partition key: --partition-by COLUMN, or data in key=value folders", o.Grain)
	}
	name := o.Name
	if name == "" {
		name = defaultName(o.Data[0])
	}
	p := newProgress(o, files)
	tb := survey.NewTable()
	tb.Grain = o.Grain
	skipped := map[string]bool{}
	skip := func(f datafile.File, col string) {
		if !skipped[col] {
			skipped[col] = true
			p.note(fmt.Sprintf("survey: %s: column %s is nested or repeated, not one value a row; it is not measured", f.Path, col))
		}
	}
	key, err := datafile.Read(files, tb, datafile.Options{PartitionBy: o.PartitionBy, Limits: o.DataLimits, Progress: p.advance, Skipped: skip})
	p.finish(err == nil)
	if err != nil {
		return schema.SurveyTable{}, err
	}
	return tb.Result(name, key, o.Grain)
}

// LoadObserved reads check --observed: survey's JSON output, bounded like a manifest.
func LoadObserved(path string, stdin io.Reader, lim schema.Limits) (*schema.Survey, error) {
	name, data, err := ReadInput(path, stdin, lim.MaxFileBytes)
	if err != nil {
		return nil, err
	}
	return schema.LoadSurvey(name, data, lim)
}

// defaultName is the table's name from its first data argument: the file or folder's
// name without extension, skipping key=value partition folders (data/meter_reads/month=1
// is meter_reads).
func defaultName(arg string) string {
	p := filepath.Clean(arg)
	for strings.Contains(filepath.Base(p), "=") && filepath.Dir(p) != p {
		p = filepath.Dir(p)
	}
	base := filepath.Base(p)
	if n := strings.TrimSuffix(base, filepath.Ext(base)); n != "" && n != "." && n != string(filepath.Separator) {
		return n
	}
	return "table"
}

// writeInto adds the table to the manifest, or replaces the table of the same name,
// keeping every other byte, and writes it atomically once it loads as a manifest.
func writeInto(o SurveyOptions, t schema.SurveyTable) error {
	if o.Into == "-" {
		return errors.New("--into names a manifest file to write; it cannot be standard input")
	}
	name, data, err := ReadInput(o.Into, nil, o.Manifest.MaxFileBytes)
	if err != nil {
		return err
	}
	if err := GuardTargets([]string{o.Into}, []string{"--into"}, append(append([]string{}, o.Data...), o.FromResult)); err != nil {
		return err
	}
	if _, err := schema.Load(name, data, o.Manifest); err != nil {
		return fmt.Errorf("%s must load as a manifest before survey edits it: %v", name, err)
	}
	doc, err := yamledit.Parse(data, strings.HasSuffix(strings.ToLower(name), ".json"))
	if err != nil {
		return fmt.Errorf("%s: %v", name, err)
	}
	err = doc.Upsert(survey.TableNode(t), "table "+t.Name, yamledit.Field("name", t.Name), yamledit.Key("tables"))
	if err != nil {
		return fmt.Errorf("%s: %v", name, err)
	}
	edited := doc.Bytes()
	if _, err := schema.Load(name, edited, o.Manifest); err != nil {
		return fmt.Errorf("%s: the edited manifest would not load, so nothing was written: %v", name, err)
	}
	if err := WriteFileAtomic(o.Into, edited); err != nil {
		return err
	}
	fmt.Fprintf(o.Stderr, "survey: wrote table %s (%d rows) into %s\n", escape.Log(escape.Text(t.Name)), t.Rows, escape.Log(escape.Text(name)))
	return nil
}

// progress reports a long survey on stderr: a bar redrawn at most ten times a second on
// a terminal, one plain line per file in CI, nothing otherwise.
type progress struct {
	o     SurveyOptions
	files []datafile.File
	total int64
	base  int64 // bytes of the files before the current one
	cur   int
	start time.Time
	last  time.Time
	drawn bool
}

// barAfter is how long a survey runs before its bar appears: a short one draws nothing.
const barAfter = 500 * time.Millisecond

func newProgress(o SurveyOptions, files []datafile.File) *progress {
	p := &progress{o: o, files: files, cur: -1, start: time.Now()}
	for _, f := range files {
		p.total += f.Size
	}
	return p
}

func (p *progress) advance(file int, done int64) {
	if file != p.cur {
		if p.cur >= 0 {
			p.base += p.files[p.cur].Size
			if p.o.Lines {
				fmt.Fprintf(p.o.Stderr, "survey: read %s (%d of %d files)\n", escape.Log(escape.Text(p.files[p.cur].Path)), p.cur+1, len(p.files))
			}
		}
		p.cur = file
	}
	if !p.o.Progress || time.Since(p.start) < barAfter || time.Since(p.last) < 100*time.Millisecond {
		return
	}
	p.last = time.Now()
	share := 1.0
	if p.total > 0 {
		share = float64(p.base+done) / float64(p.total)
	}
	const width = 30
	n := int(share * width)
	fmt.Fprintf(p.o.Stderr, "\rsurvey [%s%s] %3.0f%%  file %d of %d", strings.Repeat("#", n), strings.Repeat(".", width-n), 100*share, file+1, len(p.files))
	p.drawn = true
}

// note prints a line on stderr, clearing the bar first.
func (p *progress) note(line string) {
	if p.drawn {
		fmt.Fprint(p.o.Stderr, "\r\033[K")
	}
	fmt.Fprintln(p.o.Stderr, escape.Log(escape.Text(line)))
}

func (p *progress) finish(ok bool) {
	if p.o.Lines && ok && p.cur >= 0 {
		fmt.Fprintf(p.o.Stderr, "survey: read %s (%d of %d files)\n", escape.Log(escape.Text(p.files[p.cur].Path)), p.cur+1, len(p.files))
	}
	if p.drawn {
		fmt.Fprint(p.o.Stderr, "\r\033[K")
	}
}

// SurveyProgress says how survey reports progress on stderr: a bar when stderr is a
// terminal outside CI, plain lines in CI (CI=true), nothing otherwise.
func SurveyProgress(stderr io.Writer) (bar, lines bool) {
	if os.Getenv("CI") == "true" {
		return false, true
	}
	return isTerminal(stderr), false
}
