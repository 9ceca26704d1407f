package main

import (
	"os"
	"path/filepath"
	"testing"
)

// FuzzReadPlan: any plan.json is read without panicking, and a plan that
// is accepted has consistent tasks.
func FuzzReadPlan(f *testing.F) {
	f.Add([]byte(`{"format":"poise-plan","version":1,"kind":"modes","input":"input.xyz","level":{"method":"hf","basis":"sto-3g"},"threads_per_task":1,"step_bohr":0.0025,"tasks":[{"index":0,"label":"a","coordinate":0,"steps":1}]}`))
	f.Add([]byte(`{"format":"poise-plan","version":1,"kind":"modes","input":"input.xyz","level":{"method":"pbe","basis":"def2-svp","fit":"def2-universal-jfit"},"threads_per_task":1,"step_bohr":0.0025,"tasks":[{"index":0,"label":"a","coordinate":0,"steps":1}]}`))
	f.Add([]byte(`{"format":"poise-plan","version":1,"kind":"reaction","input":"input/r.reaction","store":"/tmp/s","tasks":[{"index":0,"species":"a","file":"a.xyz"}]}`))
	f.Add([]byte(`{"format":"poise-plan","version":1,"kind":"modes","input":"../x.xyz","tasks":[{"index":1}]}`))
	f.Add([]byte(`{"format":"poise-plan","version":2}`))
	f.Add([]byte(`{`))
	f.Add([]byte(`null`))
	f.Fuzz(func(t *testing.T, data []byte) {
		dir := t.TempDir()
		if err := os.WriteFile(filepath.Join(dir, planName), data, 0o644); err != nil {
			t.Fatal(err)
		}
		p, err := readPlan(dir)
		if err != nil {
			if exitCode(err) != exitUsage {
				t.Errorf("a bad plan is not a usage error: %v", err)
			}
			return
		}
		if len(p.Tasks) == 0 || !filepath.IsLocal(p.Input) {
			t.Errorf("accepted plan %+v", p)
		}
		for i, task := range p.Tasks {
			if task.Index != i {
				t.Errorf("task %d has index %d", i, task.Index)
			}
			// Reading a task whose input file is missing is an error, not a panic.
			if _, err := p.readTask(i); err == nil {
				t.Errorf("task %d without an input file accepted", i)
			}
		}
		if _, err := p.readTask(len(p.Tasks)); err == nil {
			t.Error("task beyond the plan accepted")
		}
	})
}
