package run

import "runtime/debug"

// releaseTag is the release's tag, stamped by the release build:
//
//	-ldflags "-X github.com/scangate/scangate/internal/run.releaseTag=v1.2.0"
//
// Empty in every other build.
var releaseTag string

// devel is the module version the toolchain records when it knows none.
const devel = "(devel)"

// ModuleVersion is the version reports carry: the release tag or the module version
// alone, never the revision, so reports of one release are byte-identical whatever
// the build's revision.
func ModuleVersion() string {
	info, _ := debug.ReadBuildInfo()
	return moduleVersion(releaseTag, info)
}

func moduleVersion(tag string, info *debug.BuildInfo) string {
	if tag != "" {
		return tag
	}
	if info != nil && info.Main.Version != "" {
		return info.Main.Version
	}
	return devel
}

// VersionLine is what `scangate version` prints: the release tag, else the module
// version, else the VCS revision; then the revision (when stamped) and the Go version.
func VersionLine() string {
	info, _ := debug.ReadBuildInfo()
	return versionLine(releaseTag, info)
}

func versionLine(tag string, info *debug.BuildInfo) string {
	if info == nil {
		if tag != "" {
			return "scangate " + tag
		}
		return "scangate unknown version (no build information)"
	}
	rev := revision(info)
	version := moduleVersion(tag, info)
	line := "scangate "
	switch {
	case version != devel:
		line += version
		if rev != "" {
			line += " (revision " + rev + ")"
		}
	case rev != "":
		line += rev
	default:
		// Neither tag, module version nor revision: built with -buildvcs=false or
		// outside a git checkout. Say so rather than print "(devel)".
		line += "unknown version (no tag, module version or revision stamped)"
	}
	return line + " " + info.GoVersion
}

// revision is the short commit the toolchain stamped, with +dirty for a modified tree.
func revision(info *debug.BuildInfo) string {
	var rev, dirty string
	for _, s := range info.Settings {
		switch s.Key {
		case "vcs.revision":
			rev = s.Value[:min(12, len(s.Value))]
		case "vcs.modified":
			if s.Value == "true" {
				dirty = "+dirty"
			}
		}
	}
	if rev == "" {
		return ""
	}
	return rev + dirty
}
