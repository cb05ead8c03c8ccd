package main

import (
	"fmt"
	"runtime"
	"runtime/debug"

	"github.com/spf13/cobra"
)

// releaseVersion is the tool's release number.
const releaseVersion = "0.1.0-dev"

// version is the version string printed by `unshelved version` and
// `unshelved --version` and stored with every run: the release, the
// commit the binary was built from and the Go version, such as
// "0.1.0-dev (commit 9cfde3d1a2b4, 2026-12-04T16:55:44Z, modified; go1.26.8)".
var version = versionString(debug.ReadBuildInfo)

// versionString reads the commit from the build information that the go
// tool stamps into binaries built from a version-controlled folder; test
// binaries and `go run` carry none ("commit unknown").
func versionString(read func() (*debug.BuildInfo, bool)) string {
	commit, when, modified := "unknown", "", false
	if bi, ok := read(); ok {
		for _, s := range bi.Settings {
			switch s.Key {
			case "vcs.revision":
				commit = s.Value
				if len(commit) > 12 {
					commit = commit[:12]
				}
			case "vcs.time":
				when = s.Value
			case "vcs.modified":
				modified = s.Value == "true"
			}
		}
	}
	c := "commit " + commit
	if when != "" {
		c += ", " + when
	}
	if modified {
		c += ", modified"
	}
	return fmt.Sprintf("%s (%s; %s)", releaseVersion, c, runtime.Version())
}

// versionOptions are the options of version: the global flags.
type versionOptions struct{ g *globals }

func newCmdVersion(g *globals) *cobra.Command {
	opts := &versionOptions{g: g}
	return &cobra.Command{
		Use:   "version",
		Short: "Print the version, the commit it was built from and the Go version",
		Args:  exactArgs(0),
		RunE:  func(cmd *cobra.Command, args []string) error { return versionRun(opts) },
	}
}

func versionRun(opts *versionOptions) error {
	_, err := fmt.Fprintln(opts.g.IO.Out, "unshelved "+version)
	return err
}
