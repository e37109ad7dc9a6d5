package schema

import (
	"bytes"
	_ "embed"
	"fmt"
	"path"
	"sort"
	"strconv"
	"strings"
)

//go:embed config.schema.json
var configSchema []byte

// ConfigSchema returns the embedded JSON Schema of the project config.
func ConfigSchema() []byte { return bytes.Clone(configSchema) }

var configDoc = newDocument("https://github.com/scangate/scangate/schema/config.schema.json", configSchema)

// ConfigFile is the project config's file name, looked for from the checked path up.
const ConfigFile = ".scangate.yaml"

// ProjectConfig is a repository's .scangate.yaml: engine profiles, default budgets,
// rule settings and the globs of the directory walk.
type ProjectConfig struct {
	File    string
	Engines map[string]EngineSettings
	Budgets Budgets
	Rules   map[string]RuleSettings
	Include []string // globs, relative to the config file's directory
	Exclude []string
}

// RuleSettings is the config of one rule: a severity override and its thresholds.
type RuleSettings struct {
	Severity string // "", "error", "warning", "note" or "off"
	Params   map[string]float64
	ParamPos map[string]Pos
	Pos      Pos
}

// ParamNames lists the thresholds set, sorted.
func (r RuleSettings) ParamNames() []string { return sortedNames(r.Params) }

// RuleIDs lists the configured rules, sorted.
func (c *ProjectConfig) RuleIDs() []string { return sortedNames(c.Rules) }

func (c *ProjectConfig) profile(name string) (EngineSettings, bool) {
	if c == nil {
		return EngineSettings{}, false
	}
	p, ok := c.Engines[name]
	return p, ok
}

func (c *ProjectConfig) profileNames() string {
	names := sortedNames(c.Engines)
	if len(names) == 0 {
		return "no profiles"
	}
	out := ""
	for i, n := range names {
		if i > 0 {
			out += ", "
		}
		out += n
	}
	return out
}

func sortedNames[V any](m map[string]V) []string {
	out := make([]string, 0, len(m))
	for k := range m {
		out = append(out, k)
	}
	sort.Strings(out)
	return out
}

// LoadConfig reads and validates a project config with the same positioned errors as
// manifests.
func LoadConfig(file string, data []byte, lim Limits) (*ProjectConfig, error) {
	t, ps := parse(file, data, lim, "write at least one of engines:, budgets:, rules:, include:, exclude:")
	if t == nil {
		return nil, &Error{File: file, Problems: ps}
	}
	// As for manifests, the schema and the decoding report together.
	ps, bad := t.check(configDoc)
	d := &decoder{t: t, bad: bad}
	root, _ := t.root.(map[string]any)
	c := &ProjectConfig{File: file, Engines: map[string]EngineSettings{}, Rules: map[string]RuleSettings{}}
	engines, _ := root["engines"].(map[string]any)
	for _, name := range sortedNames(engines) {
		if e, ok := engines[name].(map[string]any); ok {
			c.Engines[name] = d.engineSettings("/engines/"+escapeToken(name), builtObject(e))
		}
	}
	if b, ok := root["budgets"].(map[string]any); ok {
		c.Budgets = d.budgets("/budgets", builtObject(b))
	}
	rules, _ := root["rules"].(map[string]any)
	for _, id := range sortedNames(rules) {
		ptr := "/rules/" + escapeToken(id)
		raw, _ := rules[id].(map[string]any)
		rs := RuleSettings{Params: map[string]float64{}, ParamPos: map[string]Pos{}, Pos: d.keyPos(ptr)}
		for _, k := range sortedNames(raw) {
			if k == "severity" {
				rs.Severity, _ = raw[k].(string)
				continue
			}
			rs.Params[k] = number(raw[k])
			rs.ParamPos[k] = d.keyPos(ptr + "/" + escapeToken(k))
		}
		c.Rules[id] = rs
	}
	c.Include = d.globs("/include", root["include"])
	c.Exclude = d.globs("/exclude", root["exclude"])
	if ps = append(ps, d.kept()...); len(ps) > 0 {
		return nil, &Error{File: file, Problems: sortProblems(ps)}
	}
	return c, nil
}

func escapeToken(s string) string { return pointer([]string{s})[1:] }

// globs reads a list of path globs and refuses, at its line and column, one that can
// never match: a bad pattern would otherwise only show as "no manifest found".
func (d *decoder) globs(ptr string, v any) []string {
	list := stringList(v)
	for i, g := range list {
		if err := CheckGlob(g); err != nil {
			d.fail(ptr+"/"+strconv.Itoa(i), fmt.Sprintf("glob %q: %v", g, err))
		}
	}
	return list
}

// CheckGlob reports why a slash-separated glob (** for any number of directories, the
// other wildcards as in path.Match) is malformed, nil when it is well formed.
func CheckGlob(g string) error {
	for _, part := range strings.Split(g, "/") {
		if part == "**" {
			continue
		}
		if _, err := path.Match(part, ""); err != nil {
			return fmt.Errorf("%q is not a valid pattern (an unclosed [ or a trailing \\); write * ? [abc] [a-z] or ** for any number of directories", part)
		}
	}
	return nil
}

func stringList(v any) []string {
	list, _ := v.([]any)
	out := make([]string, 0, len(list))
	for _, x := range list {
		if s, ok := x.(string); ok {
			out = append(out, s)
		}
	}
	return out
}
