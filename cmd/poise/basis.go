package main

import "github.com/spf13/cobra"

// newBasisCmd is a placeholder; replaced by the real command.
func newBasisCmd() *cobra.Command {
	return &cobra.Command{Use: "basis", Short: "(not yet available)"}
}
