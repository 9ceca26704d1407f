package main

import "github.com/spf13/cobra"

// newThermoCmd is a placeholder; replaced by the real command.
func newThermoCmd() *cobra.Command {
	return &cobra.Command{Use: "thermo", Short: "(not yet available)"}
}
