package run

import (
	"runtime/debug"
	"testing"
)

// TestVersionLine: the release tag wins, then the module version, then the revision;
// "(devel)" is never printed, and reports carry the tag or module version alone.
func TestVersionLine(t *testing.T) {
	vcs := []debug.BuildSetting{{Key: "vcs.revision", Value: "269dacb8a39a21c7ddafd74f503c61aa6389ee41"}, {Key: "vcs.modified", Value: "true"}}
	build := func(version string, settings []debug.BuildSetting) *debug.BuildInfo {
		return &debug.BuildInfo{GoVersion: "go1.26.0", Main: debug.Module{Version: version}, Settings: settings}
	}
	for _, c := range []struct {
		name, tag    string
		info         *debug.BuildInfo
		line, module string
	}{
		{"tag", "v1.3.0", build("v1.3.0", nil), "scangate v1.3.0 go1.26.0", "v1.3.0"},
		{"tag beats a pseudo-version", "v1.3.0", build("v0.0.0-20261202051759-269dacb8a39a", vcs), "scangate v1.3.0 (revision 269dacb8a39a+dirty) go1.26.0", "v1.3.0"},
		{"module version", "", build("v1.2.0", nil), "scangate v1.2.0 go1.26.0", "v1.2.0"},
		{"pseudo-version", "", build("v0.0.0-20261202051759-269dacb8a39a+dirty", vcs), "scangate v0.0.0-20261202051759-269dacb8a39a+dirty (revision 269dacb8a39a+dirty) go1.26.0", "v0.0.0-20261202051759-269dacb8a39a+dirty"},
		{"revision only", "", build("(devel)", vcs[:1]), "scangate 269dacb8a39a go1.26.0", "(devel)"},
		{"dirty revision", "", build("(devel)", vcs), "scangate 269dacb8a39a+dirty go1.26.0", "(devel)"},
		{"nothing stamped", "", build("(devel)", nil), "scangate unknown version (no tag, module version or revision stamped) go1.26.0", "(devel)"},
		{"no build info", "", nil, "scangate unknown version (no build information)", "(devel)"},
	} {
		t.Run(c.name, func(t *testing.T) {
			if got := versionLine(c.tag, c.info); got != c.line {
				t.Errorf("versionLine = %q, want %q", got, c.line)
			}
			if got := moduleVersion(c.tag, c.info); got != c.module {
				t.Errorf("moduleVersion = %q, want %q", got, c.module)
			}
		})
	}
}
