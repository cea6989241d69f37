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
			v := runner.Tool()
			_, err := fmt.Fprintf(c.OutOrStdout(), "rankplan %s\nrevision %s\ngo %s %s/%s\n", v.Version, v.RevisionText(), v.GoVersion, v.GOOS, v.GOARCH)
			return err
		},
	}
}
