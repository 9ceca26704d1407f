// Command poise relaxes molecules, proves they are minima and computes their
// vibrational and thermochemical properties with its own Hartree–Fock and
// Kohn–Sham engine.
package main

import (
	"context"
	"errors"
	"fmt"
	"os"
	"os/signal"
	"strings"
	"syscall"

	"github.com/spf13/cobra"
)

// version is the program version; release builds set it with
// -ldflags "-X main.version=...".
var version = "0.1.0-dev"

func newRootCmd() *cobra.Command {
	root := &cobra.Command{
		Use:           "poise",
		Short:         "ab initio structures, frequencies and thermochemistry",
		Long:          "poise relaxes a molecular structure, proves it is a minimum, and computes harmonic\nfrequencies, IR intensities and ideal-gas thermochemistry with its own Hartree–Fock\nand Kohn–Sham DFT engine.",
		SilenceUsage:  true,
		SilenceErrors: true,
	}
	root.SetFlagErrorFunc(func(c *cobra.Command, err error) error {
		return usageErr(fmt.Errorf("%w (see 'poise %s --help')", err, c.Name()))
	})
	root.AddCommand(
		newVersionCmd(),
		newBasisCmd(),
		newEnergyCmd(),
		newGradientCmd(),
		newRelaxCmd(),
		newThermoCmd(),
		newDispersionCmd(),
		newModesCmd(),
		newReactionCmd(),
		newSettleCmd(),
		newTaskCmd(),
	)
	return root
}

func newVersionCmd() *cobra.Command {
	return &cobra.Command{
		Use:   "version",
		Short: "print the program version",
		Args:  cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			fmt.Fprintf(cmd.OutOrStdout(), "poise %s\n", version)
			return nil
		},
	}
}

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	root := newRootCmd()
	err := root.ExecuteContext(ctx)
	os.Exit(reportError(os.Stderr, err))
}

// Exit statuses shared by every command.
const (
	exitOK          = 0
	exitFailure     = 1 // an unexpected failure
	exitUsage       = 2 // a user mistake: bad input file, bad flag
	exitNotConverge = 3 // a calculation that did not converge
)

// exitError carries the exit status a failure should produce.
type exitError struct {
	code int
	err  error
}

func (e *exitError) Error() string { return e.err.Error() }
func (e *exitError) Unwrap() error { return e.err }

// usageErr marks err as a user mistake (exit status 2).
func usageErr(err error) error {
	if err == nil {
		return nil
	}
	return &exitError{code: exitUsage, err: err}
}

// convergeErr marks err as a convergence failure (exit status 3).
func convergeErr(err error) error {
	if err == nil {
		return nil
	}
	return &exitError{code: exitNotConverge, err: err}
}

// reportError prints err (if any) and returns the exit status for it.
func reportError(w *os.File, err error) int {
	if err != nil {
		fmt.Fprintf(w, "poise: %v\n", err)
	}
	return exitCode(err)
}

// exitCode is the exit status for err.
func exitCode(err error) int {
	if err == nil {
		return exitOK
	}
	var ee *exitError
	if errors.As(err, &ee) {
		return ee.code
	}
	// cobra's own complaints about the command line are user mistakes.
	if msg := err.Error(); strings.HasPrefix(msg, "unknown command") || strings.HasPrefix(msg, "unknown flag") ||
		strings.Contains(msg, "arg(s)") || strings.HasPrefix(msg, "invalid argument") {
		return exitUsage
	}
	return exitFailure
}
