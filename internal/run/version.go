package run

import (
	"fmt"
	"runtime/debug"
)

// ModuleVersion is the version reports carry: the module version alone, so reports of
// one release are byte-identical whatever the build's revision.
func ModuleVersion() string {
	if info, ok := debug.ReadBuildInfo(); ok && info.Main.Version != "" {
		return info.Main.Version
	}
	return "(devel)"
}

// VersionLine reads the version and VCS revision the Go toolchain stamped into the binary.
func VersionLine() string {
	info, ok := debug.ReadBuildInfo()
	if !ok {
		return "scangate (unknown version)"
	}
	version := info.Main.Version
	if version == "" {
		version = "(devel)"
	}
	line := "scangate " + version
	var rev, modified string
	for _, s := range info.Settings {
		switch s.Key {
		case "vcs.revision":
			rev = s.Value
		case "vcs.modified":
			if s.Value == "true" {
				modified = "+dirty"
			}
		}
	}
	if rev != "" {
		line += fmt.Sprintf(" (revision %s%s)", rev[:min(12, len(rev))], modified)
	}
	return line + " " + info.GoVersion
}
