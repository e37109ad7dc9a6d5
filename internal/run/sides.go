package run

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"os/exec"
	"path"
	"path/filepath"
	"strings"
	"time"
)

// gitTimeout bounds every git command diff runs; reading a tree or a blob is quick, so
// a command that takes longer is stuck (a lock, a prompt, a network filesystem).
const gitTimeout = 60 * time.Second

// keyedInput is one manifest of one side and its key: the repository path that
// identifies it on both sides.
type keyedInput struct {
	Input
	key      string
	repoPath string // its own repository path, when that is not key (a base file of two directories)
}

// Side is the manifests of one side of a diff, each keyed by its repository path.
type Side struct {
	label  string
	inputs []keyedInput
	seen   map[string]bool
}

// add appends in unless a file with its key is already there (overlapping PATHs).
// path is the file's own repository path when it differs from key, else "".
func (s *Side) add(in Input, key, path string) {
	if s.seen == nil {
		s.seen = map[string]bool{}
	}
	if !s.seen[key] {
		s.seen[key] = true
		s.inputs = append(s.inputs, keyedInput{in, key, path})
	}
}

// PathSides reads two files, or the manifests of two directories, for a diff without
// git. Both sides are keyed by the new side's repository paths: two files are the same
// file, and a file of the old directory is the file at the same place in the new one.
func PathSides(oldPath, newPath string, stdin io.Reader, maxBytes int, keep func(string) bool) ([2]Side, error) {
	sides := [2]Side{{label: oldPath}, {label: newPath}}
	if oldPath == "-" && newPath == "-" {
		return sides, errors.New("only one of OLD and NEW can be - (standard input)")
	}
	root := RepositoryRoot()
	kinds := [2]string{}
	for i, p := range []string{oldPath, newPath} {
		if p == "-" {
			kinds[i] = "file"
			continue
		}
		info, err := os.Stat(p)
		switch {
		case err != nil:
			return sides, fmt.Errorf("cannot read %s: %w", p, UnwrapPath(err))
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
		key := RepositoryPath(root, newPath)
		if newPath == "-" {
			key = RepositoryPath(root, oldPath)
		}
		for i, p := range []string{oldPath, newPath} {
			in := Input{name: StdinName}
			if p == "-" {
				in.data, in.err = ReadLimited(stdin, maxBytes)
			} else {
				in = readFile(p, maxBytes)
			}
			sides[i].add(in, key, "")
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
			key, own := RepositoryPath(root, filepath.Join(newPath, rel)), RepositoryPath(root, in.name)
			if own == key {
				own = ""
			}
			sides[i].add(in, key, own)
		}
	}
	if len(sides[0].inputs) == 0 && len(sides[1].inputs) == 0 {
		return sides, fmt.Errorf("no manifest found under %s or %s (looked for *.yaml, *.yml and *.json files that hold \"format:\")", oldPath, newPath)
	}
	return sides, nil
}

// RevisionSides selects the manifests of paths in the working tree and in the tree of
// rev, the same way on both sides: a file named on the command line is taken as it is,
// a directory gives its *.yaml, *.yml and *.json files that hold "format:" outside
// hidden directories. A path may be missing on one side (a file added or deleted), not
// on both. The repository is only read: git ls-tree and git show, no checkout.
func RevisionSides(ctx context.Context, rev string, paths []string, maxBytes int, keep func(string) bool) ([2]Side, error) {
	sides := [2]Side{{label: rev}, {label: "working tree"}}
	if strings.HasPrefix(rev, "-") {
		return sides, fmt.Errorf("--base %q: not a revision; name a branch, tag or commit", rev)
	}
	if ctx == nil {
		ctx = context.Background()
	}
	if _, err := exec.LookPath("git"); err != nil {
		return sides, fmt.Errorf("--base needs git, which is not on PATH; install it, or compare two paths without git: scangate diff OLD NEW")
	}
	root := RepositoryRoot()
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
			sides[0].add(in.Input, in.key, "")
		}
		for _, in := range headFound {
			sides[1].add(in, RepositoryPath(root, in.name), "")
		}
	}
	return sides, nil
}

// workingTree reads the manifests of p in the working tree; exists is false when p is
// not there (deleted by the change).
func workingTree(p string, maxBytes int, keep func(string) bool) (found []Input, exists bool, err error) {
	info, err := os.Stat(p)
	switch {
	case errors.Is(err, fs.ErrNotExist):
		return nil, false, nil
	case err != nil:
		return nil, false, fmt.Errorf("cannot read %s: %w", p, UnwrapPath(err))
	case info.IsDir():
		found, err = walk(p, maxBytes, keep)
		return found, true, err
	case info.Mode().IsRegular():
		return []Input{readFile(p, maxBytes)}, true, nil
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
		in := Input{name: rev + ":" + p, data: data, err: err}
		if err == nil && !named && !manifestMarker.Match(data) {
			continue
		}
		found = append(found, keyedInput{in, p, ""})
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

// Paths are the files the side reads, for GuardTargets.
func (s Side) Paths() []string {
	inputs := make([]Input, len(s.inputs))
	for i, in := range s.inputs {
		inputs[i] = in.Input
	}
	return Paths(inputs)
}
