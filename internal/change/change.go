// Package change compares two checked sets of manifests, a base and a head, and says
// what the change does: each table's partitions, segments, fill and scan cost before and
// after, the totals per model, and the findings it introduces, resolves and keeps. Gate
// judges the result against a pull request's limits.
//
// It is pure: the caller loads and checks both sides (schema -> layout -> rules) and
// passes the results in; no git, no files, no clock.
package change

import (
	"iter"
	"sort"

	"github.com/scangate/scangate/internal/analysis"
	"github.com/scangate/scangate/internal/layout"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// File is one checked manifest on one side of a change.
type File struct {
	Name string // as reported: the path, or REV:path for a file read from a revision
	// Key identifies the file on both sides: its repository path. Findings are
	// fingerprinted with it, so a file keeps its findings' identity across the change.
	Key string
	// Path is the file's own repository path on its side, for people: the same as Key,
	// except for a base file of a two-directory diff, whose Key is the place it takes
	// in the new directory. "" means Key.
	Path    string
	Model   string
	Invalid bool           // could not be read or broke the schema; its findings say why
	Tables  []analysis.Row // in brief: the figures compared, not the analyses
}

// RepoPath is where the file is on its own side: Path, or Key when Path is unset.
func (f *File) RepoPath() string {
	if f.Path != "" {
		return f.Path
	}
	return f.Key
}

// Side is everything checked on one side of the change.
type Side struct {
	Label    string // what the side is, for people: a revision, "working tree", a path
	Files    []File
	Findings []rules.Finding // of every file, schema findings of invalid files included
}

// FileStatus says what happened to a file.
type FileStatus string

// File statuses. A file is renamed when its path exists on one side only and a file
// with the same model exists at a path found on the other side only (see match).
const (
	FileAdded   FileStatus = "added"
	FileRemoved FileStatus = "removed"
	FileRenamed FileStatus = "renamed"
	FileKept    FileStatus = "kept" // the same path on both sides
)

// FileChange pairs a file of the base with one of the head; Base or Head is nil for an
// added or removed file.
type FileChange struct {
	Status     FileStatus
	Model      string
	Base, Head *File
}

// Status says what happened to a table or a model.
type Status string

// Table and model statuses.
const (
	Added     Status = "added"
	Removed   Status = "removed"
	Changed   Status = "changed"
	Unchanged Status = "unchanged"
)

// Figures are the numbers of one table on one side.
type Figures struct {
	Rows       int64
	Partitions int
	Segments   int64
	Fill       float64  // rows / (segments x segment_rows)
	FixedMs    float64  // fixed CPU ms of one full scan: segments x segment_overhead_ms
	ScanWallMs *float64 // wall ms of a full scan of the widest column; nil without column profiles
}

func figuresOf(t *analysis.Row) *Figures {
	f := &Figures{
		Rows: t.Layout.Rows, Partitions: t.Layout.Partitions, Segments: t.Layout.Segments,
		Fill: t.Layout.Fill, FixedMs: t.Layout.FixedMs,
	}
	if t.Scanned {
		w := t.ScanWallMs
		f.ScanWallMs = &w
	}
	return f
}

// sameFigures reports whether two rows have equal figures (figuresOf), without making them.
func sameFigures(a, b *analysis.Row) bool {
	return a.Layout.Rows == b.Layout.Rows && a.Layout.Partitions == b.Layout.Partitions &&
		a.Layout.Segments == b.Layout.Segments && a.Layout.Fill == b.Layout.Fill &&
		a.Layout.FixedMs == b.Layout.FixedMs && a.Scanned == b.Scanned && (!a.Scanned || a.ScanWallMs == b.ScanWallMs)
}

func sameFloat(a, b *float64) bool {
	return (a == nil && b == nil) || (a != nil && b != nil && *a == *b)
}

// TableChange is one table before and after; Before is nil for an added table, After
// for a removed one.
type TableChange struct {
	Model, Name        string
	Status             Status
	BaseFile, HeadFile string // the files as reported; "" on the side without the table
	// Moved is set when the table's file has another repository path in the head: the
	// file was renamed, or the table moved to another file of its model.
	Moved         bool
	Before, After *Figures
	// BasePos and HeadPos are where the table is written on each side (its mapping's
	// first key); zero on the side without the table.
	BasePos, HeadPos schema.Pos
}

// AddedMs is the fixed overhead per scan the change adds to the table: an added table
// adds all of its own, a removed one takes all of its own away.
func (t TableChange) AddedMs() float64 { return fixedMs(t.After) - fixedMs(t.Before) }

// AddedSegments is the segments the change adds to the table, counted the same way.
func (t TableChange) AddedSegments() int64 { return segments(t.After) - segments(t.Before) }

func fixedMs(f *Figures) float64 {
	if f == nil {
		return 0
	}
	return f.FixedMs
}

func segments(f *Figures) int64 {
	if f == nil {
		return 0
	}
	return f.Segments
}

// Totals sum a model's tables on one side.
type Totals struct {
	Tables     int
	Partitions int
	Segments   int64
	FixedMs    float64
	// RefreshBytes is the model's memory at the peak of a full refresh, nil when no
	// table has column profiles. The peak belongs to the model, not to a table.
	RefreshBytes *float64
}

// ModelChange is one model: its tables (TableChanges), and its totals before and after
// (nil on the side without the model).
type ModelChange struct {
	Name          string
	Status        Status
	Before, After *Totals
	// The tables in head order, then the removed tables in base order. Most tables of a
	// change over a repository are unchanged in place; those are kept in brief, a third
	// of a TableChange, and the rest in full. brief is nil when every table is in full,
	// else it lists every table, a full one as an entry without figures.
	full  []TableChange
	brief []briefTable
	files *sideFiles // what brief's file indexes point into
}

// briefTable is a table unchanged in place: the same file, position and figures on
// both sides. fig is nil for an entry that stands for the model's next table in full.
type briefTable struct {
	name       string
	pos        schema.Pos
	fig        *Figures
	base, head int32 // its file on each side, an index into files
}

// sideFiles are both sides' files, as Compare was given them.
type sideFiles struct{ base, head []File }

// NewModelChange is a model with the given tables, for a change put together by hand.
func NewModelChange(name string, status Status, tables []TableChange, before, after *Totals) ModelChange {
	return ModelChange{Name: name, Status: status, full: tables, Before: before, After: after}
}

// TableChanges yields the model's tables in order: the head's, then the removed ones.
func (m *ModelChange) TableChanges() iter.Seq[TableChange] {
	return func(yield func(TableChange) bool) {
		if m.brief == nil {
			for _, t := range m.full {
				if !yield(t) {
					return
				}
			}
			return
		}
		next := 0
		for i := range m.brief {
			b := &m.brief[i]
			var t TableChange
			if b.fig == nil {
				t = m.full[next]
				next++
			} else {
				t = TableChange{
					Model: m.Name, Name: b.name, Status: Unchanged,
					BaseFile: m.files.base[b.base].Name, HeadFile: m.files.head[b.head].Name,
					Before: b.fig, After: b.fig, BasePos: b.pos, HeadPos: b.pos,
				}
			}
			if !yield(t) {
				return
			}
		}
	}
}

// TableCount is how many tables TableChanges yields.
func (m *ModelChange) TableCount() int {
	if m.brief == nil {
		return len(m.full)
	}
	return len(m.brief)
}

// FindingChange is one finding of the change. For a finding of the head (new,
// worsened, improved, unchanged) it is the head's, for a resolved one the base's.
type FindingChange struct {
	Finding     rules.Finding
	Fingerprint string
	Was         rules.Severity // a finding on both sides: its severity on the base side
	// Figure is the finding's graded figure (see GradedFigures), "" when the finding is
	// not on both sides or carries none; Before and After are its values.
	Figure        string
	Before, After float64
}

// Escalated reports whether a finding on both sides got more severe.
func (f FindingChange) Escalated() bool { return f.Was != 0 && f.Finding.Severity > f.Was }

// Eased reports whether a finding on both sides got less severe.
func (f FindingChange) Eased() bool { return f.Was != 0 && f.Finding.Severity < f.Was }

// Invalid is a file that could not be checked, on either side, with the schema
// findings that say why.
type Invalid struct {
	Side     string // "base" or "head"
	File     File
	Findings []rules.Finding
}

// Diff is what a change does.
type Diff struct {
	Base, Head string // the sides' labels
	Files      []FileChange
	Models     []ModelChange // sorted by name
	// Findings by state (see Compare): each in the head's order, Resolved in the base's.
	Introduced []FindingChange
	Resolved   []FindingChange
	Worsened   []FindingChange
	Improved   []FindingChange
	Unchanged  []FindingChange
	// Invalid lists the files that broke the schema. When it is not empty nothing was
	// compared: the numbers of a file that cannot be read are unknown.
	Invalid []Invalid
}

// Tables is every table of every model, in report order, numbered from 0. It yields
// them in place rather than copying them into one list: a change over a repository
// holds tens of thousands, and the gate and the reports walk them several times.
func (d *Diff) Tables() iter.Seq2[int, TableChange] {
	return func(yield func(int, TableChange) bool) {
		i := 0
		for k := range d.Models {
			for t := range d.Models[k].TableChanges() {
				if !yield(i, t) {
					return
				}
				i++
			}
		}
	}
}

// TableCount is how many tables Tables yields.
func (d *Diff) TableCount() int {
	n := 0
	for k := range d.Models {
		n += d.Models[k].TableCount()
	}
	return n
}

// Options tune Compare.
type Options struct {
	// FigureThreshold is how far, as a share of its base value, a finding's graded
	// figure must move at the same severity to count as worsened or improved: 0.1 is
	// 10%. A move of exactly the threshold is unchanged.
	FigureThreshold float64
	// Release sets the Tables of both sides' files to nil once the tables are matched:
	// the table changes hold every figure the diff shows, and a change over a whole
	// repository need not hold both sides' rows beside them while its findings are
	// matched. For a caller that has no further use for the sides.
	Release bool
}

// DefaultFigureThreshold is diff's --figure-threshold unless told otherwise: 10%.
const DefaultFigureThreshold = 0.1

// Compare is CompareWith at the default options.
func Compare(base, head Side) *Diff {
	return CompareWith(base, head, Options{FigureThreshold: DefaultFigureThreshold})
}

// CompareWith works out what changes from base to head. Tables are matched by model
// and table name (first within the same file, then across files, so a table keeps its
// identity when its file is renamed or the model is split); findings by fingerprint,
// and a finding on both sides is worsened when its severity rose or, at the same
// severity, its graded figure rose by more than o.FigureThreshold, improved the other
// way round, else unchanged.
func CompareWith(base, head Side, o Options) *Diff {
	d := &Diff{Base: base.Label, Head: head.Label}
	d.Invalid = append(invalid("base", base), invalid("head", head)...)
	if len(d.Invalid) > 0 {
		return d
	}
	var rename map[string]string // base key -> head key of renamed files
	d.Files, rename = matchFiles(base.Files, head.Files)
	d.Models = matchTables(base.Files, head.Files, rename, o.Release)
	if o.Release {
		for _, files := range [][]File{base.Files, head.Files} {
			for i := range files {
				files[i].Tables = nil
			}
		}
	}
	var kept []keptPair
	d.Introduced, d.Resolved, kept = matchFindings(base, head, rename)
	// Judged once, then each list made its exact length: on a repository most findings
	// are kept unchanged, and a list grown by appending holds up to twice them. The
	// pairs are indexes until then, not findings: the sides' findings are still held.
	paired := func(k keptPair) FindingChange {
		return pairFinding(base.Findings[k.base], head.Findings[k.head], k.fp)
	}
	verdicts := make([]int8, len(kept))
	var count [3]int // worsened, improved, unchanged
	for i, k := range kept {
		switch verdicts[i] = int8(judge(paired(k), o.FigureThreshold)); verdicts[i] {
		case 1:
			count[0]++
		case -1:
			count[1]++
		default:
			count[2]++
		}
	}
	d.Worsened, d.Improved, d.Unchanged = sized(count[0]), sized(count[1]), sized(count[2])
	for i, k := range kept {
		f := paired(k)
		switch verdicts[i] {
		case 1:
			d.Worsened = append(d.Worsened, f)
		case -1:
			d.Improved = append(d.Improved, f)
		default:
			d.Unchanged = append(d.Unchanged, f)
		}
	}
	return d
}

// sized is a list with room for n findings, nil for none (as a list never appended to).
func sized(n int) []FindingChange {
	if n == 0 {
		return nil
	}
	return make([]FindingChange, 0, n)
}

func invalid(side string, s Side) []Invalid {
	byFile := map[string][]rules.Finding{}
	for _, f := range s.Files {
		if f.Invalid {
			byFile[f.Name] = nil
		}
	}
	for _, x := range s.Findings {
		if list, ok := byFile[x.File]; ok {
			byFile[x.File] = append(list, x)
		}
	}
	var out []Invalid
	for _, f := range s.Files {
		if f.Invalid {
			out = append(out, Invalid{Side: side, File: f, Findings: byFile[f.Name]})
		}
	}
	return out
}

// matchFiles pairs the files of both sides by key. A base file whose key is gone and a
// head file whose key is new are a rename when they hold the same model; among several
// candidates the first by key wins, so the pairing is deterministic.
func matchFiles(base, head []File) ([]FileChange, map[string]string) {
	headKeys, baseKeys := map[string]bool{}, map[string]bool{}
	for _, f := range head {
		headKeys[f.Key] = true
	}
	for _, f := range base {
		baseKeys[f.Key] = true
	}
	var gone, fresh []*File
	var out []FileChange
	for i := range base {
		if !headKeys[base[i].Key] {
			gone = append(gone, &base[i])
		}
	}
	for i := range head {
		if !baseKeys[head[i].Key] {
			fresh = append(fresh, &head[i])
		}
	}
	sort.SliceStable(gone, func(i, j int) bool { return gone[i].Key < gone[j].Key })
	sort.SliceStable(fresh, func(i, j int) bool { return fresh[i].Key < fresh[j].Key })
	rename := map[string]string{}
	paired := map[*File]bool{}
	freshByModel := map[string][]*File{} // in key order; the first is taken
	for _, h := range fresh {
		if h.Model != "" {
			freshByModel[h.Model] = append(freshByModel[h.Model], h)
		}
	}
	for _, b := range gone {
		if q := freshByModel[b.Model]; b.Model != "" && len(q) > 0 {
			h := q[0]
			freshByModel[b.Model] = q[1:]
			paired[h], paired[b] = true, true
			rename[b.Key] = h.Key
			out = append(out, FileChange{Status: FileRenamed, Model: h.Model, Base: b, Head: h})
		}
	}
	byKey := map[string]*File{}
	for i := range base {
		byKey[base[i].Key] = &base[i]
	}
	for i := range head {
		h := &head[i]
		switch b := byKey[h.Key]; {
		case b != nil:
			out = append(out, FileChange{Status: FileKept, Model: h.Model, Base: b, Head: h})
		case !paired[h]:
			out = append(out, FileChange{Status: FileAdded, Model: h.Model, Head: h})
		}
	}
	for _, b := range gone {
		if !paired[b] {
			out = append(out, FileChange{Status: FileRemoved, Model: b.Model, Base: b})
		}
	}
	sort.SliceStable(out, func(i, j int) bool { return fileKey(out[i]) < fileKey(out[j]) })
	return out, rename
}

// fileKey orders file changes by the path they have in the head, else in the base.
func fileKey(c FileChange) string {
	if c.Head != nil {
		return c.Head.Key
	}
	return c.Base.Key
}

// placed is one table of one side by index: its file and its place among the file's
// rows, so listing every table of a repository costs 8 bytes a table.
type placed struct{ file, table int32 }

// placedSide resolves the placed tables of one side; keys are its files' keys, a base
// key translated through renames.
type placedSide struct {
	files []File
	keys  []string
}

func (s placedSide) file(p placed) *File        { return &s.files[p.file] }
func (s placedSide) row(p placed) *analysis.Row { return &s.files[p.file].Tables[p.table] }
func (s placedSide) key(p placed) string        { return s.keys[p.file] }
func (s placedSide) name(p placed) name         { return name{s.files[p.file].Model, s.row(p).Name} }

// name is a table's identity across the sides: its model and its name.
type name struct{ model, table string }

// matchTables pairs tables by (file, model, table) first, then by (model, table) among
// those left, and groups them by model.
func matchTables(base, head []File, rename map[string]string, release bool) []ModelChange {
	list := func(files []File, rename map[string]string) (placedSide, []placed) {
		s := placedSide{files: files, keys: make([]string, len(files))}
		n := 0
		for i := range files {
			s.keys[i] = files[i].Key
			if k, ok := rename[s.keys[i]]; ok {
				s.keys[i] = k
			}
			n += len(files[i].Tables)
		}
		out := make([]placed, 0, n)
		for i := range files {
			for j := range files[i].Tables {
				out = append(out, placed{int32(i), int32(j)})
			}
		}
		return s, out
	}
	bside, bs := list(base, rename)
	hside, hs := list(head, nil)
	pair := make([]int32, len(hs)) // index into bs + 1; 0 when unmatched
	used := make([]bool, len(bs))
	// Each head table takes the first unused base table of its (model, table) in base
	// order, in the same file first. The same file's are looked up one file at a time
	// and the rest only among the tables left, so the lookups stay the size of a file
	// and of the leftovers, not of the repository.
	take := func(q []int) ([]int, int) {
		for len(q) > 0 && used[q[0]] {
			q = q[1:] // taken by an earlier head table; never wanted again
		}
		if len(q) == 0 {
			return q, -1
		}
		return q[1:], q[0]
	}
	byKey := map[string][]int{} // base tables by their (translated) file key, in base order
	for j, b := range bs {
		byKey[bside.key(b)] = append(byKey[bside.key(b)], j)
	}
	inFile := map[name][]int{}
	for i := 0; i < len(hs); {
		end := i + 1
		for end < len(hs) && hs[end].file == hs[i].file {
			end++ // a head file's tables are listed together
		}
		clear(inFile)
		for _, j := range byKey[hside.key(hs[i])] {
			n := bside.name(bs[j])
			inFile[n] = append(inFile[n], j)
		}
		for ; i < end; i++ {
			n := hside.name(hs[i])
			var j int
			if inFile[n], j = take(inFile[n]); j >= 0 {
				used[j], pair[i] = true, int32(j+1)
			}
		}
	}
	anywhere := map[name][]int{}
	for j, b := range bs {
		if !used[j] {
			n := bside.name(b)
			anywhere[n] = append(anywhere[n], j)
		}
	}
	for i, h := range hs {
		if pair[i] != 0 || len(anywhere) == 0 {
			continue
		}
		n := hside.name(h)
		var j int
		if anywhere[n], j = take(anywhere[n]); j >= 0 {
			used[j], pair[i] = true, int32(j+1)
		}
	}
	// A head table is kept in brief when it is unchanged in place.
	inBrief := func(i int) bool {
		if pair[i] == 0 {
			return false
		}
		b, h := bs[pair[i]-1], hs[i]
		bt, ht := bside.row(b), hside.row(h)
		return bside.file(b).Key == hside.file(h).Key && bt.Pos == ht.Pos && sameFigures(bt, ht)
	}
	// Each model's lists are made their exact length at once: a change over a repository
	// lists every table, and lists grown by appending hold up to twice that.
	type size struct{ full, all int }
	sizes := map[string]*size{}
	count := func(model string, brief bool) {
		n := sizes[model]
		if n == nil {
			n = &size{}
			sizes[model] = n
		}
		n.all++
		if !brief {
			n.full++
		}
	}
	for i, h := range hs {
		count(hside.file(h).Model, inBrief(i))
	}
	for j, b := range bs {
		if !used[j] {
			count(bside.file(b).Model, false)
		}
	}
	files := &sideFiles{base, head}
	models := map[string]*ModelChange{}
	model := func(name string) *ModelChange {
		if m, ok := models[name]; ok {
			return m
		}
		m := &ModelChange{Name: name, files: files}
		if n := sizes[name]; n != nil {
			if n.full > 0 {
				m.full = make([]TableChange, 0, n.full)
			}
			if n.full < n.all {
				m.brief = make([]briefTable, 0, n.all)
			}
		}
		models[name] = m
		return m
	}
	addFull := func(tc TableChange) {
		m := model(tc.Model)
		if m.brief != nil {
			m.brief = append(m.brief, briefTable{})
		}
		m.full = append(m.full, tc)
	}
	// Models without tables still count: a model whose file lists no tables is rare, but
	// a file's presence on a side is what makes the model exist there.
	present := func(files []File) map[string]bool {
		p := map[string]bool{}
		for _, f := range files {
			p[f.Model] = true
			model(f.Model)
		}
		return p
	}
	// The peaks read every row, so they come before any row is released.
	basePeaks, headPeaks := refreshPeaks(base), refreshPeaks(head)
	// With release, a file's rows go as soon as its last table has its change: the
	// changes then take the rows' place instead of piling up beside them. The removed
	// tables are taken first (they go after the head's, in base order), so that a base
	// file's rows wait only for the head tables paired with them.
	var removed []TableChange
	for j, b := range bs {
		if used[j] {
			continue
		}
		bf, bt := bside.file(b), bside.row(b)
		removed = append(removed, TableChange{Model: bf.Model, Name: bt.Name, BaseFile: bf.Name, BasePos: bt.Pos, Before: figuresOf(bt), Status: Removed})
	}
	var waiting []int32 // per base file: its paired tables whose change is not made yet
	if release {
		waiting = make([]int32, len(base))
		for j, b := range bs {
			if used[j] {
				waiting[b.file]++
			}
		}
		for i := range base {
			if waiting[i] == 0 {
				base[i].Tables = nil
			}
		}
	}
	for i, h := range hs {
		hf, ht := hside.file(h), hside.row(h)
		if pair[i] != 0 && inBrief(i) {
			b := bs[pair[i]-1]
			m := model(hf.Model)
			m.brief = append(m.brief, briefTable{name: ht.Name, pos: ht.Pos, fig: figuresOf(ht), base: b.file, head: h.file})
		} else {
			tc := TableChange{Model: hf.Model, Name: ht.Name, HeadFile: hf.Name, HeadPos: ht.Pos, After: figuresOf(ht), Status: Added}
			if pair[i] != 0 {
				bf, bt := bside.file(bs[pair[i]-1]), bside.row(bs[pair[i]-1])
				tc.BaseFile, tc.BasePos, tc.Moved = bf.Name, bt.Pos, bf.Key != hf.Key
				if sameFigures(bt, ht) {
					tc.Status = Unchanged
					tc.Before = tc.After // read only: most tables of a change hold one copy, not two
				} else {
					tc.Status, tc.Before = Changed, figuresOf(bt)
				}
			}
			addFull(tc)
		}
		if pair[i] != 0 && release {
			b := bs[pair[i]-1]
			if waiting[b.file]--; waiting[b.file] == 0 {
				bside.file(b).Tables = nil
			}
		}
		if release && (i+1 == len(hs) || hs[i+1].file != h.file) {
			hf.Tables = nil // a head file's tables are listed together: this was its last
		}
	}
	for _, tc := range removed {
		addFull(tc)
	}
	// Only now: a model's lists are made when its first table comes, as rows go.
	inBase, inHead := present(base), present(head)
	out := make([]ModelChange, 0, len(models))
	for _, name := range sortedNames(models) {
		m := models[name]
		if inBase[name] {
			m.Before = totals(m, func(t TableChange) *Figures { return t.Before })
			m.Before.RefreshBytes = basePeaks[name]
		}
		if inHead[name] {
			m.After = totals(m, func(t TableChange) *Figures { return t.After })
			m.After.RefreshBytes = headPeaks[name]
		}
		switch {
		case m.Before == nil:
			m.Status = Added
		case m.After == nil:
			m.Status = Removed
		default:
			m.Status = Unchanged
			if !sameFloat(m.Before.RefreshBytes, m.After.RefreshBytes) {
				m.Status = Changed // refresh_parallelism alone moves the peak
			}
			for _, t := range m.full { // the tables in brief are unchanged
				if t.Status != Unchanged {
					m.Status = Changed
				}
			}
		}
		out = append(out, *m)
	}
	return out
}

// refreshPeaks is each model's refresh peak on one side as the refresh-memory rule
// states it (layout.RefreshPeak): 2 x the encoded size of every profiled column + the
// partitions refreshed at once x segment_rows x the widest uncompressed row, with the
// engine of the model's first table, in file order; nil without profiles.
func refreshPeaks(files []File) map[string]*float64 {
	type sum struct {
		bytes, row float64
		profiled   bool
		first      *analysis.Row
	}
	sums := map[string]*sum{}
	for i := range files {
		f := &files[i]
		for j := range f.Tables {
			t := &f.Tables[j]
			s := sums[f.Model]
			if s == nil {
				s = &sum{first: t}
				sums[f.Model] = s
			}
			if !t.Scanned {
				continue
			}
			s.profiled = true
			s.bytes += t.Encoded
			s.row = max(s.row, t.RowBytes)
		}
	}
	out := make(map[string]*float64, len(sums))
	for model, s := range sums {
		if s.profiled {
			peak := layout.RefreshPeak(s.bytes, int(s.first.Workers), s.first.SegmentRows, s.row)
			out[model] = &peak
		}
	}
	return out
}

func totals(m *ModelChange, side func(TableChange) *Figures) *Totals {
	t := &Totals{}
	for tc := range m.TableChanges() {
		if f := side(tc); f != nil {
			t.Tables++
			t.Partitions += f.Partitions
			t.Segments += f.Segments
			t.FixedMs += f.FixedMs
		}
	}
	return t
}

func sortedNames[V any](m map[string]V) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}

// keptPair is a finding on both sides: its index in each side's findings and its
// fingerprint.
type keptPair struct {
	base, head int32
	fp         string
}

// matchFindings sorts the findings into introduced, resolved and kept by their
// fingerprint (rule, repository path, table, subject; never the line). A base finding
// of a renamed file is fingerprinted with the file's new path, so a rename alone
// introduces and resolves nothing. Equal fingerprints pair up in order.
func matchFindings(base, head Side, rename map[string]string) (introduced, resolved []FindingChange, kept []keptPair) {
	keyOf := func(files []File) map[string]string {
		m := map[string]string{}
		for _, f := range files {
			m[f.Name] = f.Key
		}
		return m
	}
	baseKeys, headKeys := keyOf(base.Files), keyOf(head.Files)
	pending := map[string][]int{}
	baseFP := make([]string, len(base.Findings))
	for i, f := range base.Findings {
		key := baseKeys[f.File]
		if k, ok := rename[key]; ok {
			key = k
		}
		baseFP[i] = rules.Fingerprint(f, key)
		pending[baseFP[i]] = append(pending[baseFP[i]], i)
	}
	matched := make([]bool, len(base.Findings))
	kept = make([]keptPair, 0, min(len(base.Findings), len(head.Findings)))
	for h, f := range head.Findings {
		fp := rules.Fingerprint(f, headKeys[f.File])
		if q := pending[fp]; len(q) > 0 {
			pending[fp] = q[1:]
			matched[q[0]] = true
			kept = append(kept, keptPair{int32(q[0]), int32(h), fp})
			continue
		}
		introduced = append(introduced, FindingChange{Finding: f, Fingerprint: fp})
	}
	for i, f := range base.Findings {
		if !matched[i] {
			resolved = append(resolved, FindingChange{Finding: f, Fingerprint: baseFP[i]})
		}
	}
	return introduced, resolved, kept
}
