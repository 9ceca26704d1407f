package main

import (
	"context"
	"errors"
	"fmt"
	"os"
	"os/signal"
	"runtime"
	"syscall"

	"github.com/spf13/cobra"
)

// benchFlags are the command-line options.
type benchFlags struct {
	workloads string
	all       bool
	repeat    int
	threads   int
	asJSON    bool
	molecules string
	child     string
	list      bool
	profile   string
}

func newRootCmd() *cobra.Command {
	var f benchFlags
	cmd := &cobra.Command{
		Use:   "poisebench",
		Short: "time poise on the benchmark workloads and compare with the goals",
		Long: `poisebench runs benchmark workloads through the poise library and prints one line per
workload: median and minimum wall time over --repeat runs, surface evaluations (energies
and gradients), SCF iterations, the peak resident memory of the run, the measured
quantity and its goal, met or missed. Each run is a separate process, so that its peak
memory is its own.

Without --workloads it runs the cheap workloads; --all adds the long ones (benzene settle,
thread speed-up, aspirin settle). --list prints them all.`,
		Args:          cobra.NoArgs,
		SilenceUsage:  true,
		SilenceErrors: true,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if f.child != "" {
				return runChild(cmd.Context(), cmd.OutOrStdout(), &f)
			}
			return runParent(cmd.Context(), cmd.OutOrStdout(), cmd.ErrOrStderr(), &f)
		},
	}
	fl := cmd.Flags()
	fl.StringVar(&f.workloads, "workloads", "", "comma-separated workloads to run (default: the cheap ones; see --list)")
	fl.BoolVar(&f.all, "all", false, "run every workload, the long ones too")
	fl.IntVar(&f.repeat, "repeat", 1, "runs of each workload (the table shows median and minimum)")
	fl.IntVar(&f.threads, "threads", runtime.NumCPU(), "number of threads of each run")
	fl.BoolVar(&f.asJSON, "json", false, "print the results as JSON instead of a table")
	fl.StringVar(&f.molecules, "molecules", "testdata/molecules", "directory of the input molecules (water.xyz, benzene.xyz, aspirin.xyz)")
	fl.BoolVar(&f.list, "list", false, "list the workloads and their goals, run nothing")
	fl.StringVar(&f.profile, "cpuprofile", "", "write a CPU profile of each run to FILE (with several runs, FILE-WORKLOAD-RUN; read it with go tool pprof)")
	fl.StringVar(&f.child, "child", "", "run one workload in this process and print its result as JSON (internal)")
	_ = fl.MarkHidden("child")
	return cmd
}

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	err := newRootCmd().ExecuteContext(ctx)
	if err != nil {
		fmt.Fprintf(os.Stderr, "poisebench: %v\n", err)
		var ue *usageError
		if errors.As(err, &ue) {
			os.Exit(2)
		}
		os.Exit(1)
	}
}

// usageError is a mistake on the command line (exit status 2).
type usageError struct{ err error }

func (e *usageError) Error() string { return e.err.Error() }
func (e *usageError) Unwrap() error { return e.err }
