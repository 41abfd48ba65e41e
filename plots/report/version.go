package report

import "runtime/debug"

// Version is stepdown's release.
const Version = "0.2.0-dev"

// modulePath is stepdown's module, looked up in the build information.
const modulePath = "github.com/stepdown-dsp/stepdown"

// ToolVersion is report.json's tool_version and what `stepdown --version`
// prints: Version, then what the build information records of the code it
// was built from. A build in a checkout of stepdown adds the commit
// ("+dirty" when the tree had changes); a program that requires stepdown
// as a module adds the module's version and, when a replace directive
// points it elsewhere, that place. Without build information (or in a
// test binary, which records no commit) it is Version alone.
func ToolVersion() string {
	bi, ok := debug.ReadBuildInfo()
	if !ok {
		return Version
	}
	if bi.Main.Path != modulePath {
		for _, d := range bi.Deps {
			if d.Path != modulePath {
				continue
			}
			v := Version + " (module " + d.Version
			if r := d.Replace; r != nil {
				v += " => " + r.Path
				if r.Version != "" {
					v += " " + r.Version
				}
			}
			return v + ")"
		}
		return Version
	}
	var rev string
	dirty := false
	for _, s := range bi.Settings {
		switch s.Key {
		case "vcs.revision":
			rev = s.Value
		case "vcs.modified":
			dirty = s.Value == "true"
		}
	}
	if len(rev) > 12 {
		rev = rev[:12]
	}
	if rev == "" {
		return Version
	}
	if dirty {
		rev += "+dirty"
	}
	return Version + " (commit " + rev + ")"
}
