package schema

import (
	"encoding/json"
	"fmt"
	"strconv"
	"time"

	"go.yaml.in/yaml/v3"
)

// MaxPartitions bounds the partitions one table may generate, so a policy such as
// keep: 1000000000 days is refused instead of exhausting memory.
const MaxPartitions = 1_000_000

// decoder turns a tree into a Manifest: it parses quantities and checks what a JSON
// Schema cannot say (unique names, tier order, exact whole numbers, list sums). It runs
// beside the schema, on a tree that may not match it: it reads only values of the type it
// expects and skips those the schema or the conversion found wrong (bad), so every
// problem of a file is reported in one run and none twice.
type decoder struct {
	t        *tree
	bad      badValues
	problems []Problem
}

// ok reports whether the value at ptr may be checked: neither it nor a value holding it
// was found wrong.
func (d *decoder) ok(ptr string) bool { return d.bad.at == nil || !d.bad.covers(ptr) }

// nodePos is where node n is written: pos of the pointer whose walk ends at n (a
// sequence element, aliases and all), without the walk from the root.
func nodePos(n *yaml.Node) Pos { return Pos{n.Line, n.Column} }

// valuePos is pos(ptr + "/" + key) for the mapping raw at ptr: the value of its own key,
// found as locate finds it (lookupKey's first pass); a key a merge brings in is located
// from the root.
func (d *decoder) valuePos(raw obj, ptr, key string) Pos {
	if i := ownKeyAt(raw, key); i >= 0 {
		return nodePos(raw.n.Content[i+1])
	}
	return d.pos(ptr + "/" + key)
}

// keyPosIn is keyPos(ptr + "/" + key) for the mapping raw at ptr, as valuePos is pos.
func (d *decoder) keyPosIn(raw obj, ptr, key string) Pos {
	if i := ownKeyAt(raw, key); i >= 0 {
		return nodePos(raw.n.Content[i])
	}
	return d.keyPos(ptr + "/" + key)
}

// ownKeyAt is the index in raw's content of its own key named key, as lookupKey's first
// pass finds it; -1 for none.
func ownKeyAt(raw obj, key string) int {
	if m := raw.n; m != nil {
		for i := 0; i+1 < len(m.Content); i += 2 {
			if k := m.Content[i]; k.Kind == yaml.ScalarNode && k.Tag != "!!merge" && k.Value == key {
				return i
			}
		}
	}
	return -1
}

func (t *tree) decode(root obj, project *ProjectConfig, bad badValues) (*Manifest, []Problem) {
	d := &decoder{t: t, bad: bad}
	m := &Manifest{Format: 1, Pos: d.pos("")}
	m.Model, _ = root.str("model")
	engine, _ := root.field("engine").(obj)
	m.Engine = d.engine("/engine", engine, project)
	if project != nil {
		m.Budgets = project.Budgets
	}
	if b, ok := root.field("budgets").(obj); ok {
		m.Budgets = m.Budgets.Override(d.budgets("/budgets", b))
	}
	tables, _ := root.field("tables").(list)
	if !d.ok("/tables") {
		tables = list{}
	}
	names := make(map[string]Pos, tables.size())
	m.Tables = make([]Table, 0, tables.size())
	for i, raw := range tables.items() {
		ptr := "/tables/" + strconv.Itoa(i)
		tm, isMap := raw.(obj)
		if !isMap || !d.ok(ptr) {
			continue
		}
		tb := d.table(ptr, tm, nodePos(tables.n.Content[i]))
		if _, named := tm.str("name"); named && d.ok(ptr+"/name") {
			if first, dup := names[tb.Name]; dup {
				d.fail(ptr+"/name", fmt.Sprintf("table %s is already declared at line %d; table names must be unique", quoteShort(tb.Name), first.Line))
			} else {
				names[tb.Name] = d.valuePos(tm, ptr, "name")
			}
		}
		m.Tables = append(m.Tables, tb)
	}
	return m, d.kept()
}

// kept is the decoder's problems without those about values already found wrong.
func (d *decoder) kept() []Problem {
	out := d.problems[:0]
	for _, p := range d.problems {
		if d.ok(p.Path) {
			out = append(out, p)
		}
	}
	return out
}

func (d *decoder) pos(ptr string) Pos {
	if l := d.t.locate(ptr); l.value != nil {
		return Pos{l.value.Line, l.value.Column}
	}
	return Pos{1, 1}
}

// keyPos is where a key is written; findings about a whole section point there.
func (d *decoder) keyPos(ptr string) Pos {
	if l := d.t.locate(ptr); l.key != nil {
		return Pos{l.key.Line, l.key.Column}
	}
	return d.pos(ptr)
}

func (d *decoder) fail(ptr, msg string) {
	d.problems = append(d.problems, Problem{Pos: d.pos(ptr), Path: ptr, Message: msg})
}

func (d *decoder) count(ptr string, v any, positive bool) int64 {
	if !d.ok(ptr) {
		return 0
	}
	n, err := count(v, positive)
	if err != nil {
		d.fail(ptr, err.Error())
	}
	return n
}

// count reads a row or value count; positive refuses 0.
func count(v any, positive bool) (int64, error) {
	n, err := quantity(v, MaxCount, "rows or values", ParseCount)
	if err == nil && positive && n == 0 {
		err = fmt.Errorf("must be > 0")
	}
	return n, err
}

// fields is a mapping as decoding reads it: a view (obj) for a manifest, the built map
// (builtObject) for the project config.
type fields interface {
	get(key string) (any, bool)
}

// optNumber is m[key] as a number, nil when the key is absent.
func optNumber(m fields, key string) *float64 {
	v, ok := m.get(key)
	if !ok {
		return nil
	}
	f := number(v)
	return &f
}

func (d *decoder) bytes(ptr string, v any) int64 {
	if !d.ok(ptr) {
		return 0
	}
	n, err := quantity(v, MaxBytes, "bytes", ParseBytes)
	if err != nil {
		d.fail(ptr, err.Error())
	}
	return n
}

func quantity(v any, limit int64, unit string, parse func(string) (int64, error)) (int64, error) {
	switch x := v.(type) {
	case json.Number:
		return parseNumber(string(x), limit, unit)
	case string:
		return parse(x)
	}
	return 0, fmt.Errorf("must be a quantity, not %T", v)
}

// maxCores is the manifest schema's maximum of cores and refresh_parallelism.
const maxCores = 4096

// wholeUpTo is a validated whole number as an int, clamped to [0, limit] before the
// conversion, which is left to the implementation beyond the int range.
func wholeUpTo(v any, limit float64) int {
	return int(min(max(number(v), 0), limit))
}

func number(v any) float64 {
	if n, ok := v.(json.Number); ok {
		f, _ := n.Float64()
		return f
	}
	return 0
}

// EngineSettings are the engine fields one source sets; nil fields are left to the next
// source in the resolution order (manifest, then profile, then defaults).
type EngineSettings struct {
	SegmentRows        *int64
	Cores              *int
	SegmentOverheadMs  *float64
	ScanMBPerS         *float64
	Memory             *int64
	RefreshParallelism *int

	RefreshRowsPerS *float64
	MaxSegmentRows  *int64
}

// over returns s with every field of top that is set replacing s's.
func (s EngineSettings) over(top EngineSettings) EngineSettings {
	if top.SegmentRows != nil {
		s.SegmentRows = top.SegmentRows
	}
	if top.Cores != nil {
		s.Cores = top.Cores
	}
	if top.SegmentOverheadMs != nil {
		s.SegmentOverheadMs = top.SegmentOverheadMs
	}
	if top.ScanMBPerS != nil {
		s.ScanMBPerS = top.ScanMBPerS
	}
	if top.Memory != nil {
		s.Memory = top.Memory
	}
	if top.RefreshParallelism != nil {
		s.RefreshParallelism = top.RefreshParallelism
	}
	if top.RefreshRowsPerS != nil {
		s.RefreshRowsPerS = top.RefreshRowsPerS
	}
	if top.MaxSegmentRows != nil {
		s.MaxSegmentRows = top.MaxSegmentRows
	}
	return s
}

// engineSettings decodes the engine fields of a manifest's engine block or a profile.
func (d *decoder) engineSettings(ptr string, e fields) EngineSettings {
	var s EngineSettings
	if v, ok := e.get("segment_rows"); ok {
		n := d.count(ptr+"/segment_rows", v, true)
		s.SegmentRows = &n
	}
	if v, ok := e.get("cores"); ok {
		n := wholeUpTo(v, maxCores)
		s.Cores = &n
	}
	s.SegmentOverheadMs = optNumber(e, "segment_overhead_ms")
	s.ScanMBPerS = optNumber(e, "scan_mb_per_s")
	if v, ok := e.get("memory"); ok {
		n := d.bytes(ptr+"/memory", v)
		s.Memory = &n
	}
	if v, ok := e.get("refresh_parallelism"); ok {
		n := wholeUpTo(v, maxCores)
		s.RefreshParallelism = &n
	}
	s.RefreshRowsPerS = optNumber(e, "refresh_rows_per_s")
	if v, ok := e.get("max_segment_rows"); ok {
		n := d.count(ptr+"/max_segment_rows", v, true)
		s.MaxSegmentRows = &n
	}
	return s
}

func (d *decoder) engine(ptr string, e obj, project *ProjectConfig) Engine {
	out := Engine{
		Cores:             DefaultCores,
		SegmentOverheadMs: DefaultSegmentOverheadMs,
		ScanMBPerS:        DefaultScanMBPerS,
		RefreshRowsPerS:   DefaultRefreshRowsPerS,
		Pos:               d.keyPos(ptr),
		SegmentRowsPos:    d.pos(ptr + "/segment_rows"),
		MemoryPos:         d.pos(ptr + "/memory"),
	}
	var s EngineSettings
	if name, ok := e.str("profile"); ok {
		out.Profile = name
		prof, found := project.profile(name)
		switch {
		case project == nil:
			d.fail(ptr+"/profile", fmt.Sprintf("engine profile %q needs a project config (.scangate.yaml) that defines it under engines:; none was found (use --config)", name))
		case !found:
			d.fail(ptr+"/profile", fmt.Sprintf("unknown engine profile %q; %s defines: %s", name, project.File, project.profileNames()))
		default:
			s = prof
			// Values from the profile are reported at the profile line.
			out.SegmentRowsPos, out.MemoryPos = d.pos(ptr+"/profile"), d.pos(ptr+"/profile")
		}
	}
	own := d.engineSettings(ptr, e)
	if own.SegmentRows != nil {
		out.SegmentRowsPos = d.pos(ptr + "/segment_rows")
	}
	if own.Memory != nil {
		out.MemoryPos = d.pos(ptr + "/memory")
	}
	s = s.over(own)
	if s.SegmentRows == nil {
		if out.Profile != "" && len(d.problems) == 0 {
			d.fail(ptr+"/profile", fmt.Sprintf("profile %q sets no segment_rows; set it in the profile or in the manifest", out.Profile))
		}
	} else {
		out.SegmentRows = *s.SegmentRows
	}
	if s.Cores != nil {
		out.Cores = *s.Cores
	}
	if s.SegmentOverheadMs != nil {
		out.SegmentOverheadMs = *s.SegmentOverheadMs
	}
	if s.ScanMBPerS != nil {
		out.ScanMBPerS = *s.ScanMBPerS
	}
	if s.Memory != nil {
		out.Memory = *s.Memory
	}
	if s.RefreshRowsPerS != nil {
		out.RefreshRowsPerS = *s.RefreshRowsPerS
	}
	out.RefreshParallelism = out.Cores
	if s.RefreshParallelism != nil {
		out.RefreshParallelism = *s.RefreshParallelism
	}
	out.MaxSegmentRows = DefaultMaxSegmentRows
	if s.MaxSegmentRows != nil {
		out.MaxSegmentRows = *s.MaxSegmentRows
	}
	if out.SegmentRows > out.MaxSegmentRows && len(d.problems) == 0 {
		at := ptr + "/segment_rows"
		if own.SegmentRows == nil {
			at = ptr + "/profile"
		}
		d.fail(at, fmt.Sprintf("segment_rows %s is above max_segment_rows %s, the largest capacity the engine accepts; lower segment_rows or raise max_segment_rows",
			group(out.SegmentRows), group(out.MaxSegmentRows)))
	}
	return out
}

func (d *decoder) budgets(ptr string, b fields) Budgets {
	out := Budgets{Pos: d.keyPos(ptr)}
	out.ScanOverheadMs = optNumber(b, "scan_overhead_ms")
	out.ScanMs = optNumber(b, "scan_ms")
	if v, ok := b.get("refresh_memory"); ok {
		n := d.bytes(ptr+"/refresh_memory", v)
		out.RefreshMemory = &n
	}
	return out
}

func (d *decoder) table(ptr string, raw obj, at Pos) Table {
	t := Table{Pos: at, RowsPos: at}
	t.Name, _ = raw.str("name")
	if v, ok := raw.get("rows"); ok {
		t.Rows = d.count(ptr+"/rows", v, false)
		t.RowsDeclared = true
		t.RowsPos = d.valuePos(raw, ptr, "rows")
	}
	t.GrowthPos = t.Pos
	if v, ok := raw.get("growth_per_year"); ok {
		t.GrowthPerYear = number(v)
		t.GrowthPos = d.valuePos(raw, ptr, "growth_per_year")
	}
	if b, ok := raw.field("budgets").(obj); ok {
		t.Budgets = d.budgets(ptr+"/budgets", b)
	}
	itemsOK := false
	if pm, ok := raw.field("partitions").(obj); ok && d.ok(ptr+"/partitions") {
		t.Partitions, itemsOK = d.partitions(ptr+"/partitions", pm, d.keyPosIn(raw, ptr, "partitions"))
	}
	ws, _ := raw.field("waivers").(list)
	for i, w := range ws.items() {
		wp := ptr + "/waivers/" + strconv.Itoa(i)
		if wm, ok := w.(obj); ok && d.ok(wp) {
			t.Waivers = append(t.Waivers, d.waiver(wp, wm))
		}
	}
	// The sum is checked only when every item is well-formed; a wrong item would make it
	// a guess.
	if t.Partitions.Scheme == SchemeList && !t.RowsDeclared && itemsOK {
		for _, it := range t.Partitions.Items {
			t.Rows += it.Rows // each item is <= MaxCount and items are bounded by the file size
		}
		if t.Rows > MaxCount {
			d.fail(ptr+"/partitions", fmt.Sprintf("the listed partitions sum to %s rows, above the limit of %s", group(t.Rows), group(MaxCount)))
		}
	}
	if r, ok := raw.field("refresh").(obj); ok && d.ok(ptr+"/refresh") {
		t.Routine = d.routine(ptr+"/refresh/routine", r, t.Partitions.Scheme)
	}
	cols, _ := raw.field("columns").(list)
	if cols.size() > 0 {
		t.Columns = make([]Column, 0, cols.size()) // kept with the table to the end of a run
	}
	seen := map[string]int{}
	for i, c := range cols.items() {
		cp := ptr + "/columns/" + strconv.Itoa(i)
		cm, ok := c.(obj)
		if !ok || !d.ok(cp) {
			continue
		}
		col := d.column(cp, cm, nodePos(cols.n.Content[i]))
		if _, named := cm.str("name"); named && d.ok(cp+"/name") {
			if line, dup := seen[col.Name]; dup {
				d.fail(cp+"/name", fmt.Sprintf("column %s is already profiled at line %d; column names must be unique", quoteShort(col.Name), line))
			} else {
				seen[col.Name] = col.Pos.Line
			}
		}
		t.Columns = append(t.Columns, col)
	}
	return t
}

// partitions decodes a policy; itemsOK says a list policy's items are all well-formed.
func (d *decoder) partitions(ptr string, raw obj, at Pos) (p Partitions, itemsOK bool) {
	p = Partitions{Pos: at}
	s, _ := raw.str("scheme")
	if !d.ok(ptr + "/scheme") {
		s = ""
	}
	p.Scheme = Scheme(s)
	switch p.Scheme {
	case SchemeEven:
		count := 0.0
		if d.ok(ptr + "/count") {
			count = number(raw.field("count"))
		}
		// Capped before the conversion: beyond int64 it wraps (count: 1e19 once became
		// a negative count and the table was silently left out).
		p.Count = int(min(count, MaxPartitions+1))
		if p.Count > MaxPartitions {
			d.fail(ptr+"/count", fmt.Sprintf("%s partitions is above the limit of %s per table; use fewer, larger partitions", figure(count), group(MaxPartitions)))
		}
	case SchemeTime:
		p.Tiers = d.tiers(ptr+"/tiers", raw.field("tiers"))
	case SchemeList:
		p.Items, itemsOK = d.items(ptr+"/items", raw.field("items"))
	}
	return p, itemsOK
}

// tiers decodes a time policy's tiers and checks their order and total. Only two
// well-formed neighbours are compared.
func (d *decoder) tiers(ptr string, v any) []Tier {
	tiers, _ := v.(list)
	if !d.ok(ptr) {
		return nil
	}
	var out []Tier
	var prev *Tier
	total := 0.0
	for i, raw := range tiers.items() {
		tp := ptr + "/" + strconv.Itoa(i)
		tm, isMap := raw.(obj)
		g, _ := tm.str("grain")
		keep := 0.0
		if d.ok(tp + "/keep") {
			keep = number(tm.field("keep"))
		}
		tier := Tier{Grain: Grain(g), Keep: int(min(keep, MaxPartitions+1)), Pos: nodePos(tiers.n.Content[i])}
		if !isMap || !d.ok(tp) || !d.ok(tp+"/grain") || tier.Grain.Rank() < 0 {
			prev = nil
			total += keep
			continue
		}
		if prev != nil && tier.Grain.Rank() <= prev.Grain.Rank() {
			d.fail(tp+"/grain", fmt.Sprintf("grain %s must be coarser than the %s of the tier before it; tiers go from newest to oldest, finer to coarser", tier.Grain, prev.Grain))
		}
		total += keep
		out = append(out, tier)
		prev = &out[len(out)-1]
	}
	if total > MaxPartitions {
		d.fail(ptr, fmt.Sprintf("the tiers keep %s periods, above the limit of %s partitions per table; keep fewer periods or use a coarser grain", figure(total), group(MaxPartitions)))
	}
	return out
}

// items decodes a list policy's items and checks their names are unique; allOK is false
// when any item is wrong, so its rows are not summed.
func (d *decoder) items(ptr string, v any) (out []Item, allOK bool) {
	items, _ := v.(list)
	if !d.ok(ptr) {
		return nil, false
	}
	allOK = !d.bad.touches(ptr)
	names := make(map[string]int, items.size())
	out = make([]Item, 0, items.size())
	// A list may hold 100,000 items: take each item's position from its node, and build
	// an item's pointer only to report a problem there.
	for i, raw := range items.items() {
		ip := func() string { return ptr + "/" + strconv.Itoa(i) }
		im, isMap := raw.(obj)
		// Pointers are built only when something in the list is wrong.
		if !isMap || (!allOK && !d.ok(ip())) {
			continue
		}
		at := items.n.Content[i]
		it := Item{Pos: Pos{at.Line, at.Column}}
		name, named := im.str("name")
		it.Name = name
		if allOK || d.ok(ip()+"/rows") {
			rows, err := count(im.field("rows"), false)
			if err != nil {
				allOK = false
				d.fail(ip()+"/rows", err.Error())
			}
			it.Rows = rows
		}
		if named && (allOK || d.ok(ip()+"/name")) {
			if line, dup := names[it.Name]; dup {
				d.fail(ip()+"/name", fmt.Sprintf("partition %s is already listed at line %d; partition names must be unique", quoteShort(it.Name), line))
			} else {
				names[it.Name] = it.Pos.Line
			}
		}
		out = append(out, it)
	}
	return out, allOK
}

// routine decodes refresh.routine and checks its key suits the scheme: days for time,
// partitions for the others.
func (d *decoder) routine(ptr string, refresh obj, scheme Scheme) Routine {
	raw, ok := refresh.field("routine").(obj)
	if !ok || !d.ok(ptr) {
		return Routine{}
	}
	r := Routine{Pos: d.keyPos(ptr)}
	_, days := raw.get("recent_days")
	_, parts := raw.get("recent_partitions")
	if days == parts {
		word := "recent_days (scheme time) or recent_partitions (even, list)"
		if scheme == SchemeTime {
			word = "recent_days"
		} else if scheme != "" {
			word = "recent_partitions"
		}
		verb := "write"
		if days {
			verb = "write only one key:"
		}
		d.fail(ptr, fmt.Sprintf("the routine refresh needs exactly one of recent_days and recent_partitions; %s %s", verb, word))
		return r
	}
	if v, ok := raw.get("recent_days"); ok && d.ok(ptr+"/recent_days") {
		r.RecentDays = wholeUpTo(v, maxRecentDays)
		if scheme != SchemeTime && scheme != "" {
			d.fail(ptr+"/recent_days", fmt.Sprintf("recent_days needs scheme time; this table's scheme is %s: write recent_partitions (the last partitions the routine refresh rebuilds)", scheme))
		}
	}
	if v, ok := raw.get("recent_partitions"); ok && d.ok(ptr+"/recent_partitions") {
		r.RecentPartitions = wholeUpTo(v, MaxPartitions)
		if scheme == SchemeTime {
			d.fail(ptr+"/recent_partitions", "a time table's routine refresh is written as recent_days (the newest days it reloads), which stays true when the partition grain changes")
		}
	}
	return r
}

// maxRecentDays is the manifest schema's maximum of refresh.routine.recent_days.
const maxRecentDays = 36525

func (d *decoder) column(ptr string, raw obj, at Pos) Column {
	c := Column{Pos: at, Order: Random}
	c.Name, _ = raw.str("name")
	c.Type, _ = raw.str("type")
	if v, ok := raw.get("distinct"); ok {
		c.Distinct = d.count(ptr+"/distinct", v, true)
	}
	if v, ok := raw.get("avg_length"); ok {
		c.AvgLength = number(v)
	}
	if v, ok := raw.str("order"); ok {
		c.Order = Order(v)
	}
	if v, ok := raw.get("run_length"); ok {
		c.RunLength = d.count(ptr+"/run_length", v, true)
	}
	if v, ok := raw.get("encoded_bytes"); ok {
		c.EncodedBytes = d.bytes(ptr+"/encoded_bytes", v)
	}
	return c
}

func (d *decoder) waiver(ptr string, raw obj) Waiver {
	w := Waiver{Pos: d.pos(ptr)}
	w.Rule, _ = raw.str("rule")
	w.Reason, _ = raw.str("reason")
	date, ok := raw.str("expires")
	if !ok || !d.ok(ptr+"/expires") {
		return w
	}
	t, err := time.Parse("2006-01-02", date)
	if err != nil {
		d.fail(ptr+"/expires", fmt.Sprintf("%s is not a calendar date; write it as YYYY-MM-DD", quoteShort(date)))
	}
	w.Expires = t
	return w
}
