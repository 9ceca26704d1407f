package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"os/exec"
	"runtime/debug"
	"runtime/pprof"
	"strconv"

	"github.com/olekukonko/tablewriter"
	"github.com/olekukonko/tablewriter/tw"
)

// runChild runs one workload in this process and prints its measurement
// as JSON.
func runChild(ctx context.Context, w io.Writer, f *benchFlags) error {
	wl, ok := findWorkload(f.child)
	if !ok {
		return &usageError{fmt.Errorf("--child: unknown workload %q", f.child)}
	}
	if f.threads < 1 {
		return &usageError{fmt.Errorf("--threads %d: give at least 1", f.threads)}
	}
	debug.SetMemoryLimit(memoryBudget) // as the CLI does with --memory
	if f.profile != "" {
		pf, err := os.Create(f.profile)
		if err != nil {
			return &usageError{fmt.Errorf("--cpuprofile: %w", err)}
		}
		defer pf.Close()
		if err := pprof.StartCPUProfile(pf); err != nil {
			return fmt.Errorf("--cpuprofile: %w", err)
		}
		defer pprof.StopCPUProfile()
	}
	m, err := wl.run(ctx, env{threads: f.threads, molecules: f.molecules})
	if err != nil {
		return fmt.Errorf("%s: %w", wl.name, err)
	}
	m.Workload = wl.name
	return json.NewEncoder(w).Encode(m)
}

// summary is the result of all runs of one workload.
type summary struct {
	Workload      string        `json:"workload"`
	What          string        `json:"description"`
	Runs          []measurement `json:"runs"`
	MedianWall    float64       `json:"median_wall_seconds"`
	MinWall       float64       `json:"min_wall_seconds"`
	Evaluations   int           `json:"evaluations"`
	SCFIterations int           `json:"scf_iterations"`
	PeakRSSBytes  int64         `json:"peak_rss_bytes"` // largest over the runs
	Value         float64       `json:"value"`          // median over the runs
	Goal          goal          `json:"goal"`
	Met           bool          `json:"met"`
	Threads       int           `json:"threads"`
}

func runParent(ctx context.Context, out, errw io.Writer, f *benchFlags) error {
	if f.list {
		for _, w := range workloads {
			set := "--all"
			if w.cheap {
				set = "default"
			}
			fmt.Fprintf(out, "%-18s %-8s goal %-9s %s\n", w.name, set, w.goal, w.what)
		}
		return nil
	}
	if f.repeat < 1 {
		return &usageError{fmt.Errorf("--repeat %d: give at least 1", f.repeat)}
	}
	if f.threads < 1 {
		return &usageError{fmt.Errorf("--threads %d: give at least 1", f.threads)}
	}
	sel, err := parseWorkloads(f.workloads, f.all)
	if err != nil {
		return &usageError{err}
	}
	exe, err := os.Executable()
	if err != nil {
		return fmt.Errorf("locating this program to run the workloads: %w", err)
	}
	var sums []summary
	for _, w := range sel {
		s := summary{Workload: w.name, What: w.what, Goal: w.goal, Threads: f.threads}
		var walls, values []float64
		for r := 0; r < f.repeat; r++ {
			fmt.Fprintf(errw, "poisebench: %s, run %d of %d\n", w.name, r+1, f.repeat)
			prof := ""
			if f.profile != "" {
				prof = f.profile
				if f.repeat > 1 || len(sel) > 1 {
					prof = fmt.Sprintf("%s-%s-%d", f.profile, w.name, r+1)
				}
			}
			m, err := runOnce(ctx, exe, w.name, f, prof, errw)
			if err != nil {
				return err
			}
			s.Runs = append(s.Runs, m)
			walls = append(walls, m.WallSeconds)
			values = append(values, m.Value)
			s.PeakRSSBytes = max(s.PeakRSSBytes, m.PeakRSSBytes)
		}
		s.MedianWall, s.MinWall = median(walls), minimum(walls)
		s.Value = median(values)
		s.Met = w.goal.met(s.Value)
		s.Evaluations, s.SCFIterations = s.Runs[0].Evaluations, s.Runs[0].SCFIterations
		sums = append(sums, s)
	}
	if f.asJSON {
		enc := json.NewEncoder(out)
		enc.SetIndent("", "  ")
		return enc.Encode(sums)
	}
	return writeTable(out, sums)
}

// runOnce runs one workload in a child process and returns its
// measurement with the child's peak resident memory.
func runOnce(ctx context.Context, exe, name string, f *benchFlags, profile string, errw io.Writer) (measurement, error) {
	args := []string{"--child", name, "--threads", strconv.Itoa(f.threads), "--molecules", f.molecules}
	if profile != "" {
		args = append(args, "--cpuprofile", profile)
	}
	cmd := exec.CommandContext(ctx, exe, args...)
	var stdout bytes.Buffer
	cmd.Stdout = &stdout
	cmd.Stderr = errw
	if err := cmd.Run(); err != nil {
		var ee *exec.ExitError
		if errors.As(err, &ee) {
			return measurement{}, fmt.Errorf("workload %s failed (exit status %d)", name, ee.ExitCode())
		}
		return measurement{}, fmt.Errorf("workload %s: %w", name, err)
	}
	var m measurement
	if err := json.Unmarshal(stdout.Bytes(), &m); err != nil {
		return measurement{}, fmt.Errorf("workload %s: reading its result: %w", name, err)
	}
	m.PeakRSSBytes = peakRSS(cmd.ProcessState)
	return m, nil
}

// writeTable prints one line per workload.
func writeTable(w io.Writer, sums []summary) error {
	t := tablewriter.NewTable(w,
		tablewriter.WithHeaderAutoFormat(tw.Off),
		tablewriter.WithHeaderAlignment(tw.AlignCenter),
		tablewriter.WithRowAlignmentConfig(tw.CellAlignment{PerColumn: []tw.Align{tw.AlignLeft, tw.AlignRight, tw.AlignRight,
			tw.AlignRight, tw.AlignRight, tw.AlignRight, tw.AlignRight, tw.AlignRight, tw.AlignLeft}}),
	)
	t.Header([]string{"workload", "median wall", "min wall", "evaluations", "SCF iterations", "peak RSS", "measured", "goal", ""})
	var rows [][]string
	for _, s := range sums {
		met := "met"
		if !s.Met {
			met = "MISSED"
		}
		rss := "n/a"
		if s.PeakRSSBytes > 0 {
			rss = fmt.Sprintf("%.0f MiB", float64(s.PeakRSSBytes)/(1<<20))
		}
		measured := fmt.Sprintf("%.2f", s.Value)
		if s.Goal.Unit != "" {
			measured += " " + s.Goal.Unit
		}
		rows = append(rows, []string{s.Workload, fmt.Sprintf("%.2f s", s.MedianWall), fmt.Sprintf("%.2f s", s.MinWall),
			strconv.Itoa(s.Evaluations), strconv.Itoa(s.SCFIterations), rss, measured, s.Goal.String(), met})
	}
	if err := t.Bulk(rows); err != nil {
		return err
	}
	if err := t.Render(); err != nil {
		return err
	}
	for _, s := range sums {
		if s.Runs[0].Detail != "" {
			fmt.Fprintf(w, "%s: %s\n", s.Workload, s.Runs[0].Detail)
		}
	}
	if len(sums) > 0 {
		fmt.Fprintf(w, "threads %d; median and minimum over %d run(s); measured = median\n", sums[0].Threads, len(sums[0].Runs))
	}
	return nil
}
