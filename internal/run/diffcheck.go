package run

import (
	"bytes"

	"github.com/scangate/scangate/internal/change"
	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// CompareSides checks both sides (CheckSides) and compares them. Both are checked with
// the same config and date, so the diff shows what the manifests change and nothing else.
func CompareSides(sides [2]Side, cfg rules.Config, proj Project, limits schema.Limits, o change.Options) *change.Diff {
	checked := CheckSides(sides, cfg, proj, limits)
	o.Release = true // the sides are checked for this comparison alone
	return change.CompareWith(checked[0], checked[1], o)
}

// CheckSides loads and checks both sides of a diff as check does, with one config and
// date, and keys their files. A file of one key on both sides is read once per side
// by one worker; when the two hold the same bytes it is analysed once and the base
// quotes the head's analysis under its own name (same bytes, same config: the same
// figures and findings). Each side spends its own partition budget, in the order of
// the head's files followed by the base's files that have no head file of their key.
func CheckSides(sides [2]Side, cfg rules.Config, proj Project, limits schema.Limits) [2]change.Side {
	base, head := sides[0].inputs, sides[1].inputs
	twin := make(map[string]int, len(base)) // key -> index in base
	for i, in := range base {
		twin[in.key] = i
	}
	type job struct{ base, head int } // -1 for a side without the file
	jobs := make([]job, 0, len(base)+len(head))
	paired := make([]bool, len(base))
	for j, in := range head {
		i, ok := twin[in.key]
		if !ok {
			i = -1
		} else {
			paired[i] = true
		}
		jobs = append(jobs, job{i, j})
	}
	for i := range base {
		if !paired[i] {
			jobs = append(jobs, job{i, -1})
		}
	}
	files := [2][]report.File{make([]report.File, len(base)), make([]report.File, len(head))}
	found := [2][][]rules.Finding{make([][]rules.Finding, len(base)), make([][]rules.Finding, len(head))}
	budgets := [2]*runBudget{newRunBudget(limits.MaxRunPartitions), newRunBudget(limits.MaxRunPartitions)}
	root := RepositoryRoot()
	parallel(len(jobs), func(k int) {
		jb := jobs[k]
		at := [2]int{jb.base, jb.head}
		ins := [2]*keyedInput{}
		for s := range 2 {
			if at[s] >= 0 {
				ins[s] = &sides[s].inputs[at[s]]
				ins[s].data, ins[s].err = ins[s].bytes() // read once, bounded by its limit
			}
		}
		// Every job spends on both budgets, base first, so each budget sees every job once.
		spent := [2]bool{}
		if ins[0] == nil {
			budgets[0].spend(k, 0)
			spent[0] = true
		}
		spend := func(s int) func(int64) bool {
			return func(n int64) bool { spent[s] = true; return budgets[s].spend(k, n) }
		}
		if ins[0] != nil && ins[1] != nil && ins[0].err == nil && ins[1].err == nil && bytes.Equal(ins[0].data, ins[1].data) {
			var n int64
			var fits bool
			hf, hfs := checkInput(ins[1].Input, root, ins[1].key, cfg, proj.Config, limits, keepRows, func(p int64) bool {
				n, fits = p, budgets[0].spend(k, p)
				spent[0], spent[1] = true, true
				return budgets[1].spend(k, p)
			})
			files[1][at[1]], found[1][at[1]] = hf, hfs
			bf, bfs := quote(hf, hfs, ins[0].name, root)
			if !fits {
				bf.Invalid, bf.Analysed, bf.Tables = true, 0, nil
				bfs = []rules.Finding{refusal(ins[0].name, n, limits)}
			}
			files[0][at[0]], found[0][at[0]] = bf, bfs
		} else {
			for s := range 2 {
				if ins[s] == nil {
					continue
				}
				files[s][at[s]], found[s][at[s]] = checkInput(ins[s].Input, root, ins[s].key, cfg, proj.Config, limits, keepRows, spend(s))
			}
		}
		for s := range 2 {
			if !spent[s] {
				budgets[s].spend(k, 0)
			}
			if ins[s] != nil {
				ins[s].data = nil
			}
		}
	})
	var out [2]change.Side
	for s := range 2 {
		own := make(map[string]keyedInput, len(sides[s].inputs)) // names are unique on a side
		for _, in := range sides[s].inputs {
			own[in.name] = in
		}
		fs, findings := sortChecked(files[s], found[s])
		found[s] = nil // flattened into findings
		out[s] = change.Side{Label: sides[s].label, Findings: findings}
		for _, f := range fs {
			in := own[f.Name]
			out[s].Files = append(out[s].Files, change.File{
				Name: f.Name, Key: in.key, Path: in.repoPath, Model: f.Model, Invalid: f.Invalid, Tables: f.Tables,
			})
		}
	}
	return out
}

// quote is the head file's check result under the base file's name: the same tables
// (read only from here on) and findings that point at the base file.
func quote(f report.File, fs []rules.Finding, name, root string) (report.File, []rules.Finding) {
	f.Name, f.URI = name, RepositoryPath(root, name)
	out := make([]rules.Finding, len(fs))
	for i, x := range fs {
		x.File = name
		out[i] = x
	}
	return f, out
}
