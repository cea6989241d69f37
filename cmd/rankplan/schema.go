package main

import (
	"strings"

	"github.com/spf13/cobra"

	"rankplan/schemas"
)

func newSchemaCmd() *cobra.Command {
	return &cobra.Command{
		Use:       "schema plan|results|validation|audit-record",
		Short:     "Print the JSON Schema of plans, results.json, validation.json or an audit record",
		Args:      exactArgs(1, "plan, results, validation or audit-record"),
		ValidArgs: schemas.Names,
		RunE: func(c *cobra.Command, args []string) error {
			b, err := schemas.Source(args[0])
			if err != nil {
				return usageErrorf("schema: %v; expected one of: %s", err, strings.Join(schemas.Names, ", "))
			}
			_, err = c.OutOrStdout().Write(b)
			return err
		},
	}
}
