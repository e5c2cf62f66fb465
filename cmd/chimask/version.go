package main

import (
	"fmt"
	"runtime"

	"github.com/spf13/cobra"
)

func newVersionCmd(s *streams) *cobra.Command {
	return &cobra.Command{
		Use:     "version",
		Short:   "Print the chimask version",
		Long:    "Print the chimask version, the Go version it was built with, and the platform. The same version string is recorded in every manifest.",
		Example: "  chimask version",
		Args:    cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			fmt.Fprintf(s.out, "chimask %s (%s, %s/%s)\n", version, runtime.Version(), runtime.GOOS, runtime.GOARCH)
			return nil
		},
	}
}
