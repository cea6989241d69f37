package main

import (
	"fmt"

	"github.com/spf13/cobra"

	"rankplan/runner"
)

func newVersionCmd() *cobra.Command {
	return &cobra.Command{
		Use:   "version",
		Short: "Print rankplan's version, VCS revision and Go version",
		Args:  exactArgs(0, "no arguments"),
		RunE: func(c *cobra.Command, args []string) error {
			_, err := fmt.Fprint(c.OutOrStdout(), versionText())
			return err
		},
	}
}

// versionText is what 'rankplan version' and 'rankplan --version' print: the version,
// the VCS revision, and the Go release and platform of the build.
func versionText() string {
	v := runner.Tool()
	return fmt.Sprintf("rankplan %s\nrevision %s\ngo %s %s/%s\n", v.Version, v.RevisionText(), v.GoVersion, v.GOOS, v.GOARCH)
}
