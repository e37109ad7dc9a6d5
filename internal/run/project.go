package run

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path"
	"path/filepath"
	"strings"
	"time"

	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// Project is the run's project config: the file it came from and what it says.
type Project struct {
	Config *schema.ProjectConfig // nil without a config file
	dir    string                // the config file's directory; globs are relative to it
}

// findConfig walks up from the first checked path (or the working directory) to the
// repository root looking for .scangate.yaml; "" when there is none.
func findConfig(paths []string) string {
	start := "."
	if len(paths) > 0 && paths[0] != "-" {
		start = paths[0]
	}
	dir, err := filepath.Abs(start)
	if err != nil {
		return ""
	}
	if info, err := os.Stat(dir); err == nil && !info.IsDir() {
		dir = filepath.Dir(dir)
	}
	for {
		candidate := filepath.Join(dir, schema.ConfigFile)
		if info, err := os.Stat(candidate); err == nil && info.Mode().IsRegular() {
			return candidate
		}
		if _, err := os.Stat(filepath.Join(dir, ".git")); err == nil {
			return "" // the repository root: configs above it belong to someone else
		}
		parent := filepath.Dir(dir)
		if parent == dir {
			return ""
		}
		dir = parent
	}
}

// LoadProject reads the config named by --config (flag), or the one found from the
// paths. A config that breaks its schema is a *schema.Error with the file's line and
// column.
func LoadProject(flag string, paths []string, limits schema.Limits) (Project, error) {
	file := flag
	if file == "" {
		file = findConfig(paths)
		if file == "" {
			return Project{}, nil
		}
		if wd, err := os.Getwd(); err == nil {
			if rel, err := filepath.Rel(wd, file); err == nil && !strings.HasPrefix(rel, "..") {
				file = rel // report it the way the user would type it
			}
		}
	}
	in := readFile(file, limits.MaxFileBytes)
	if in.err != nil {
		return Project{}, fmt.Errorf("cannot read the config %s: %v", file, in.err)
	}
	cfg, err := schema.LoadConfig(in.name, in.data, limits)
	if err != nil {
		return Project{}, err
	}
	return Project{Config: cfg, dir: filepath.Dir(file)}, nil
}

// RulesConfig turns the project's rule settings and --today into the rules' Config.
func (p Project) RulesConfig(today string) (rules.Config, error) {
	day := time.Now().UTC().Truncate(24 * time.Hour)
	if today != "" {
		d, err := time.Parse("2006-01-02", today)
		if err != nil {
			return rules.Config{}, fmt.Errorf("--today %q: write the date as YYYY-MM-DD", today)
		}
		day = d
	}
	return rules.ConfigFrom(p.Config, day)
}

// Keep applies the config's include and exclude globs to a file found by walking a
// directory; files named on the command line are always checked.
func (p Project) Keep(file string) bool {
	if p.Config == nil || (len(p.Config.Include) == 0 && len(p.Config.Exclude) == 0) {
		return true
	}
	abs, err1 := filepath.Abs(file)
	base, err2 := filepath.Abs(p.dir)
	rel, err3 := filepath.Rel(base, abs)
	if errors.Join(err1, err2, err3) != nil {
		return true
	}
	rel = filepath.ToSlash(rel)
	if len(p.Config.Include) > 0 {
		in := false
		for _, g := range p.Config.Include {
			in = in || globMatch(g, rel)
		}
		if !in {
			return false
		}
	}
	for _, g := range p.Config.Exclude {
		if globMatch(g, rel) {
			return false
		}
	}
	return true
}

// globMatch matches a slash-separated path against a glob where ** stands for any
// number of directories and the other wildcards work as in path.Match.
func globMatch(pattern, name string) bool {
	return matchParts(strings.Split(pattern, "/"), strings.Split(name, "/"))
}

func matchParts(pat, name []string) bool {
	for len(pat) > 0 {
		if pat[0] == "**" {
			for i := 0; i <= len(name); i++ {
				if matchParts(pat[1:], name[i:]) {
					return true
				}
			}
			return false
		}
		if len(name) == 0 {
			return false
		}
		if ok, err := path.Match(pat[0], name[0]); err != nil || !ok {
			return false
		}
		pat, name = pat[1:], name[1:]
	}
	return len(name) == 0
}

// PlainConfig is the rules' Config for a run without a project config.
func PlainConfig(today string) (rules.Config, error) {
	return Project{}.RulesConfig(today)
}

// Files are the files the project config was read from, for GuardTargets.
func (p Project) Files() []string {
	if p.Config == nil {
		return nil
	}
	return []string{p.Config.File}
}

// ProjectConfig reads the project config (--config, or the nearest one found from the
// paths) and the rules' settings with --today. A config that breaks its schema has its
// problems printed on stderr at their lines and columns (Problems).
func ProjectConfig(stderr io.Writer, configFile string, paths []string, today string, limits schema.Limits) (Project, rules.Config, error) {
	proj, err := LoadProject(configFile, paths, limits)
	if err != nil {
		return proj, rules.Config{}, configProblems(stderr, err)
	}
	cfg, err := proj.RulesConfig(today)
	if err != nil {
		return proj, cfg, configProblems(stderr, err)
	}
	return proj, cfg, nil
}

func configProblems(stderr io.Writer, err error) error {
	return Problems(stderr, err, "config", "the project config is invalid; fix it and run again")
}
