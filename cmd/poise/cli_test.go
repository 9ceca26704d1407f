package main

import (
	"bytes"
	"fmt"
	"testing"
)

// execCLI runs poise with args as main would (the error printed to
// standard error) and returns standard output, standard error, the exit
// status and the error. With merge, standard
// error goes into the first string too.
func execCLI(t *testing.T, merge bool, args ...string) (string, string, int, error) {
	t.Helper()
	root := newRootCmd()
	var out, errOut bytes.Buffer
	root.SetOut(&out)
	if merge {
		root.SetErr(&out)
	} else {
		root.SetErr(&errOut)
	}
	root.SetArgs(args)
	err := root.Execute()
	if err != nil { // as main prints it
		w := &errOut
		if merge {
			w = &out
		}
		fmt.Fprintf(w, "poise: %v\n", err)
	}
	return out.String(), errOut.String(), exitCode(err), err
}
