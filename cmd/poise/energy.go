package main

import "github.com/spf13/cobra"

// newEnergyCmd is a placeholder; replaced by the real command.
func newEnergyCmd() *cobra.Command {
	return &cobra.Command{Use: "energy", Short: "(not yet available)"}
}
