package main

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"os"
	"os/exec"
	"path"
	"path/filepath"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"github.com/scangate/scangate/internal/change"
	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// diffFormats are the formats diff writes.
var diffFormats = []string{"text", "json", "markdown"}

// gitTimeout bounds every git command diff runs; reading a tree or a blob is quick, so
// a command that takes longer is stuck (a lock, a prompt, a network filesystem).
const gitTimeout = 60 * time.Second

func newDiff() *cobra.Command {
	var base, output, today, configFile, failOnNew string
	var formats []string
	var noColor bool
	var maxMs float64
	var maxSegments int64
	cmd := &cobra.Command{
		Use:   "diff (--base REV [PATH...] | OLD NEW)",
		Short: "Show what a change does to segments and ms per scan, and gate it",
		Long: "diff checks the manifests on both sides of a change and compares them: each\n" +
			"table's partitions, segments, fill, fixed ms per scan and scan wall ms before,\n" +
			"after and the delta, the totals per model, and the findings the change\n" +
			"introduces, resolves and keeps.\n\n" +
			"With --base REV it compares the manifests at git revision REV (read from git,\n" +
			"nothing is checked out) with the working tree; PATH selects them as check does.\n" +
			"Without --base it compares two files, or two directories, OLD and NEW.\n\n" +
			"Tables are matched by model and table name. A file whose path exists on one\n" +
			"side only is a rename when a file holding the same model exists at a path found\n" +
			"on the other side only. Findings are matched by fingerprint (rule, path, table,\n" +
			"subject; never the line), so moving lines changes nothing.\n\n" +
			"Exit codes: 1 when the change crosses --max-added-ms, --max-added-segments or\n" +
			"--fail-on-new; 2 when a file on either side breaks the schema, or on wrong usage;\n" +
			"0 otherwise. Formats: text, json, markdown (NAME or NAME=FILE, as for check).",
		Example: "  scangate diff --base origin/main\n" +
			"  scangate diff --base origin/main --max-added-ms 200 --fail-on-new error models/\n" +
			"  scangate diff --base HEAD~1 --format markdown=out/diff.md --format text\n" +
			"  scangate diff testdata/diff/before testdata/diff/after",
		RunE: func(cmd *cobra.Command, args []string) error {
			gate := change.Gate{}
			if cmd.Flags().Changed("max-added-ms") {
				if math.IsNaN(maxMs) || math.IsInf(maxMs, 0) || maxMs < 0 {
					return usageError(fmt.Errorf("--max-added-ms %v: give a number of milliseconds, 0 or more", maxMs))
				}
				gate.MaxAddedMs = &maxMs
			}
			if cmd.Flags().Changed("max-added-segments") {
				if maxSegments < 0 {
					return usageError(fmt.Errorf("--max-added-segments %d: give a number of segments, 0 or more", maxSegments))
				}
				gate.MaxAddedSegments = &maxSegments
			}
			if failOnNew != "never" {
				sev, err := rules.ParseSeverity(failOnNew)
				if err != nil {
					return usageError(fmt.Errorf("--fail-on-new %q: use error, warning, note or never", failOnNew))
				}
				gate.FailOnNew = sev
			}
			outs, err := parseFormats(formats, output, []string{"text"}, diffFormats)
			if err != nil {
				return usageError(err)
			}
			var configFrom []string
			if base == "" && len(args) == 2 {
				configFrom = args[1:] // the new side's config
			} else {
				configFrom = args
			}
			proj, err := loadProject(configFile, configFrom)
			if err != nil {
				return configError(cmd, err)
			}
			cfg, err := proj.rulesConfig(today)
			if err != nil {
				return configError(cmd, err)
			}
			maxBytes := limits.MaxFileBytes
			var sides [2]sideInputs
			if base != "" {
				sides, err = revisionInputs(cmd.Context(), base, args, maxBytes, proj.keep)
			} else {
				if len(args) != 2 {
					return usageError(fmt.Errorf("diff compares two paths, OLD and NEW (got %d), or the working tree with a revision: scangate diff --base REV [PATH...]", len(args)))
				}
				sides, err = pathInputs(args[0], args[1], cmd.InOrStdin(), maxBytes, proj.keep)
			}
			if err != nil {
				return usageError(err)
			}
			// Both sides are checked with the same config and date, so the diff shows
			// what the manifests change and nothing else.
			d := change.Compare(checkSide(sides[0], cfg, proj), checkSide(sides[1], cfg, proj))
			res := report.NewDiffResult(moduleVersion(), d, gate)
			stdout := cmd.OutOrStdout()
			render := func(format string, w io.Writer, color bool) error {
				switch format {
				case "json":
					return report.DiffJSON(w, res)
				case "markdown":
					return report.DiffMarkdown(w, res)
				}
				return report.DiffText(w, res, color)
			}
			if err := writeOutputs(outs, render, stdout, useColor(stdout, noColor), nil); err != nil {
				return usageError(err)
			}
			switch {
			case len(d.Invalid) > 0:
				return &exitError{code: exitInvalid}
			case len(res.Breaches) > 0:
				return &exitError{code: exitFindings}
			}
			return nil
		},
	}
	f := cmd.Flags()
	f.StringVar(&base, "base", "", "git revision to compare the working tree with (a branch, tag or commit; it must be fetched)")
	f.Float64Var(&maxMs, "max-added-ms", 0, "fail when the change adds more than this many fixed ms per scan to any one table")
	f.Int64Var(&maxSegments, "max-added-segments", 0, "fail when the change adds more than this many segments to any one table")
	f.StringVar(&failOnNew, "fail-on-new", "never", "fail on a new finding at or above this severity (error, warning, note or never); a finding that became this severe counts as new")
	f.BoolVar(&noColor, "no-color", false, "never colour the output (NO_COLOR does the same)")
	f.StringArrayVar(&formats, "format", nil, "report format NAME or NAME=FILE (text, json, markdown); repeatable")
	f.StringVar(&output, "output", "", "write the report that would go to standard output to this file instead (atomically)")
	f.StringVar(&today, "today", "", "the date waivers and forecasts are judged on, YYYY-MM-DD (default: today, UTC)")
	f.StringVar(&configFile, "config", "", "project config to use for both sides (default: the nearest "+schema.ConfigFile+" from the first path up to the repository root)")
	return cmd
}

// keyedInput is one manifest of one side and its key: the repository path that
// identifies it on both sides.
type keyedInput struct {
	input
	key string
}

type sideInputs struct {
	label  string
	inputs []keyedInput
	seen   map[string]bool
}

// add appends in unless a file with its key is already there (overlapping PATHs).
func (s *sideInputs) add(in input, key string) {
	if s.seen == nil {
		s.seen = map[string]bool{}
	}
	if !s.seen[key] {
		s.seen[key] = true
		s.inputs = append(s.inputs, keyedInput{in, key})
	}
}

// checkSide loads and checks one side as check does and keys its files.
func checkSide(s sideInputs, cfg rules.Config, proj project) change.Side {
	inputs := make([]input, len(s.inputs))
	for i, in := range s.inputs {
		inputs[i] = in.input
	}
	files, findings := checkAll(inputs, cfg, proj.config, true)
	side := change.Side{Label: s.label, Findings: findings}
	for i, f := range files {
		side.Files = append(side.Files, change.File{
			Name: f.Name, Key: s.inputs[i].key, Model: f.Model, Invalid: f.Invalid, Tables: f.Tables,
		})
	}
	return side
}

// pathInputs reads two files, or the manifests of two directories, for a diff without
// git. Both sides are keyed by the new side's repository paths: two files are the same
// file, and a file of the old directory is the file at the same place in the new one.
func pathInputs(oldPath, newPath string, stdin io.Reader, maxBytes int, keep func(string) bool) ([2]sideInputs, error) {
	sides := [2]sideInputs{{label: oldPath}, {label: newPath}}
	if oldPath == "-" && newPath == "-" {
		return sides, errors.New("only one of OLD and NEW can be - (standard input)")
	}
	root := repositoryRoot()
	kinds := [2]string{}
	for i, p := range []string{oldPath, newPath} {
		if p == "-" {
			kinds[i] = "file"
			continue
		}
		info, err := os.Stat(p)
		switch {
		case err != nil:
			return sides, fmt.Errorf("cannot read %s: %w", p, unwrapPath(err))
		case info.IsDir():
			kinds[i] = "directory"
		case info.Mode().IsRegular():
			kinds[i] = "file"
		default:
			return sides, fmt.Errorf("%s is not a regular file or a directory", p)
		}
	}
	if kinds[0] != kinds[1] {
		return sides, fmt.Errorf("%s is a %s but %s is a %s: compare two files or two directories", oldPath, kinds[0], newPath, kinds[1])
	}
	if kinds[0] == "file" {
		key := repositoryPath(root, newPath)
		if newPath == "-" {
			key = repositoryPath(root, oldPath)
		}
		for i, p := range []string{oldPath, newPath} {
			in := input{name: stdinName}
			if p == "-" {
				in.data, in.err = readLimited(stdin, maxBytes)
			} else {
				in = readFile(p, maxBytes)
			}
			sides[i].add(in, key)
		}
		return sides, nil
	}
	for i, dir := range []string{oldPath, newPath} {
		found, err := walk(dir, maxBytes, keep)
		if err != nil {
			return sides, err
		}
		for _, in := range found {
			rel, err := filepath.Rel(dir, filepath.FromSlash(in.name))
			if err != nil {
				return sides, err
			}
			sides[i].add(in, repositoryPath(root, filepath.Join(newPath, rel)))
		}
	}
	if len(sides[0].inputs) == 0 && len(sides[1].inputs) == 0 {
		return sides, fmt.Errorf("no manifest found under %s or %s (looked for *.yaml, *.yml and *.json files that hold \"format:\")", oldPath, newPath)
	}
	return sides, nil
}

// revisionInputs selects the manifests of paths in the working tree and in the tree of
// rev, the same way on both sides: a file named on the command line is taken as it is,
// a directory gives its *.yaml, *.yml and *.json files that hold "format:" outside
// hidden directories. A path may be missing on one side (a file added or deleted), not
// on both. The repository is only read: git ls-tree and git show, no checkout.
func revisionInputs(ctx context.Context, rev string, paths []string, maxBytes int, keep func(string) bool) ([2]sideInputs, error) {
	sides := [2]sideInputs{{label: rev}, {label: "working tree"}}
	if strings.HasPrefix(rev, "-") {
		return sides, fmt.Errorf("--base %q: not a revision; name a branch, tag or commit", rev)
	}
	if ctx == nil {
		ctx = context.Background()
	}
	if _, err := exec.LookPath("git"); err != nil {
		return sides, fmt.Errorf("--base needs git, which is not on PATH; install it, or compare two paths without git: scangate diff OLD NEW")
	}
	root := repositoryRoot()
	g := gitRunner{ctx: ctx, dir: root}
	if _, err := g.run(0, "rev-parse", "--is-inside-work-tree"); err != nil {
		return sides, fmt.Errorf("--base %s: %s is not inside a git repository (%v)", rev, root, err)
	}
	commit, err := g.run(0, "rev-parse", "--verify", "--quiet", rev+"^{commit}")
	if err != nil {
		return sides, fmt.Errorf("--base %s: no such commit in this repository; check the name, or fetch it first (a shallow clone holds only what was fetched, e.g. git fetch --depth=1 origin main)", rev)
	}
	g.commit = strings.TrimSpace(string(commit))
	if len(paths) == 0 {
		paths = []string{"."}
	}
	for _, p := range paths {
		if p == "-" {
			return sides, errors.New("- (standard input) has no base revision; with --base, name files or directories of the working tree")
		}
		rel, ok := relToRoot(root, p)
		if !ok {
			return sides, fmt.Errorf("%s is outside the repository at %s", p, root)
		}
		baseFound, err := g.manifests(rev, rel, maxBytes, func(repoPath string) bool {
			return keep(filepath.Join(root, filepath.FromSlash(repoPath)))
		})
		if err != nil {
			return sides, err
		}
		headFound, exists, err := workingTree(p, maxBytes, keep)
		if err != nil {
			return sides, err
		}
		if !exists && len(baseFound) == 0 {
			return sides, fmt.Errorf("cannot read %s: no such file or directory in the working tree or in %s", p, rev)
		}
		if len(baseFound) == 0 && len(headFound) == 0 {
			return sides, fmt.Errorf("no manifest found under %s in the working tree or in %s (looked for *.yaml, *.yml and *.json files that hold \"format:\")", p, rev)
		}
		for _, in := range baseFound {
			sides[0].add(in.input, in.key)
		}
		for _, in := range headFound {
			sides[1].add(in, repositoryPath(root, in.name))
		}
	}
	return sides, nil
}

// workingTree reads the manifests of p in the working tree; exists is false when p is
// not there (deleted by the change).
func workingTree(p string, maxBytes int, keep func(string) bool) (found []input, exists bool, err error) {
	info, err := os.Stat(p)
	switch {
	case errors.Is(err, fs.ErrNotExist):
		return nil, false, nil
	case err != nil:
		return nil, false, fmt.Errorf("cannot read %s: %w", p, unwrapPath(err))
	case info.IsDir():
		found, err = walk(p, maxBytes, keep)
		return found, true, err
	case info.Mode().IsRegular():
		return []input{readFile(p, maxBytes)}, true, nil
	}
	return nil, false, fmt.Errorf("%s is not a regular file or a directory", p)
}

// relToRoot is p relative to the repository root with forward slashes, "." for the
// root itself; ok is false when p is outside it.
func relToRoot(root, p string) (string, bool) {
	abs, err := filepath.Abs(p)
	if err != nil {
		return "", false
	}
	rel, err := filepath.Rel(root, abs)
	if err != nil || rel == ".." || strings.HasPrefix(rel, ".."+string(filepath.Separator)) {
		return "", false
	}
	return filepath.ToSlash(rel), true
}

// gitRunner runs read-only git commands in the repository, each under gitTimeout.
type gitRunner struct {
	ctx    context.Context
	dir    string
	commit string // the base revision, resolved once so every read sees the same tree
}

// run runs git and returns its standard output, at most limit+1 bytes of it when limit
// is above 0 (the loader then refuses the file as too large); the error quotes git.
func (g gitRunner) run(limit int, args ...string) ([]byte, error) {
	ctx, cancel := context.WithTimeout(g.ctx, gitTimeout)
	defer cancel()
	cmd := exec.CommandContext(ctx, "git", args...)
	cmd.Dir = g.dir
	// No optional locks: a read must never write to the repository, not even the index.
	cmd.Env = append(os.Environ(), "GIT_OPTIONAL_LOCKS=0", "GIT_TERMINAL_PROMPT=0")
	out := &capped{limit: limit}
	var stderr capped
	stderr.limit = 4096
	cmd.Stdout, cmd.Stderr = out, &stderr
	err := cmd.Run()
	if ctx.Err() == context.DeadlineExceeded {
		return nil, fmt.Errorf("git %s did not finish within %s", strings.Join(args, " "), gitTimeout)
	}
	if err != nil {
		msg := strings.TrimSpace(stderr.b.String())
		if i := strings.IndexByte(msg, '\n'); i >= 0 {
			msg = msg[:i]
		}
		if msg == "" {
			msg = err.Error()
		}
		return nil, fmt.Errorf("git %s: %s", args[0], msg)
	}
	return out.b.Bytes(), nil
}

// capped keeps the first limit+1 bytes written to it (all when limit is 0) and drops
// the rest, so a huge blob cannot fill memory and git still exits normally.
type capped struct {
	b     bytes.Buffer
	limit int
}

func (c *capped) Write(p []byte) (int, error) {
	if c.limit > 0 {
		if room := c.limit + 1 - c.b.Len(); room < len(p) {
			c.b.Write(p[:max(room, 0)])
			return len(p), nil
		}
	}
	return c.b.Write(p)
}

// manifests selects the manifests of rel (a file or directory, relative to the root)
// in the base tree and reads them. Names are REV:path, as git itself names a blob.
func (g gitRunner) manifests(rev, rel string, maxBytes int, keep func(string) bool) ([]keyedInput, error) {
	args := []string{"ls-tree", "-r", "-z", "--full-name", g.commit}
	if rel != "." {
		args = append(args, "--", rel)
	}
	out, err := g.run(0, args...)
	if err != nil {
		return nil, err
	}
	var found []keyedInput
	for _, entry := range strings.Split(string(out), "\x00") {
		meta, p, ok := strings.Cut(entry, "\t")
		if !ok {
			continue
		}
		fields := strings.Fields(meta) // mode type object
		if len(fields) != 3 || fields[1] != "blob" || fields[0] == "120000" {
			continue // submodules and symbolic links are never manifests
		}
		named := p == rel // a file named on the command line is taken whatever it holds
		if !named {
			if !underVisible(rel, p) || !keep(p) {
				continue
			}
			switch strings.ToLower(path.Ext(p)) {
			case ".yaml", ".yml", ".json":
			default:
				continue
			}
		}
		data, err := g.run(maxBytes, "show", "--no-textconv", g.commit+":"+p)
		in := input{name: rev + ":" + p, data: data, err: err}
		if err == nil && !named && !manifestMarker.Match(data) {
			continue
		}
		found = append(found, keyedInput{in, p})
	}
	return found, nil
}

// underVisible reports whether p lies below dir (relative to the root) without passing
// through a hidden directory below it, as the working-tree walk skips them.
func underVisible(dir, p string) bool {
	rest := p
	if dir != "." {
		if !strings.HasPrefix(p, dir+"/") {
			return false
		}
		rest = p[len(dir)+1:]
	}
	parts := strings.Split(rest, "/")
	for _, d := range parts[:len(parts)-1] {
		if strings.HasPrefix(d, ".") {
			return false
		}
	}
	return true
}
