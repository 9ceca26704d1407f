package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"poise/energy/molecule"
	"poise/energy/units"
)

// waterStart is water 0.05 Å and 5° away from its experimental structure
// (r 0.9572 Å, 104.52°), in a temporary directory.
func waterStart(t *testing.T) string {
	t.Helper()
	return writeFile(t, "water.xyz", "3\nwater, distorted\nO 0 0 0.1173\nH 0 0.80 -0.4692\nH 0 -0.78 -0.47\n")
}

func TestRelaxJSON(t *testing.T) {
	in := waterStart(t)
	out, code, err := runCLI(t, "relax", in, "--method", "hf", "--basis", "sto-3g", "--threads", "1", "--json")
	if code != exitOK {
		t.Fatalf("exit %d: %v\n%s", code, err, out)
	}
	var rep map[string]any
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatalf("not JSON: %v\n%s", err, out)
	}
	for _, key := range []string{"energy_hartree", "converged", "steps", "symbols", "geometry_angstrom"} {
		if _, ok := rep[key]; !ok {
			t.Errorf("JSON lacks %q", key)
		}
	}
	if rep["converged"] != true {
		t.Errorf("converged = %v", rep["converged"])
	}
	geom, ok := rep["geometry_angstrom"].([]any)
	if !ok || len(geom) != 3 {
		t.Fatalf("geometry_angstrom = %v", rep["geometry_angstrom"])
	}
	var pos [3][3]float64
	for i, p := range geom {
		xyz := p.([]any)
		for k := 0; k < 3; k++ {
			pos[i][k] = xyz[k].(float64)
		}
	}
	r := math.Sqrt(sq(pos[1][0]-pos[0][0]) + sq(pos[1][1]-pos[0][1]) + sq(pos[1][2]-pos[0][2]))
	// HF/STO-3G water, r(OH) 0.989 Å (from memory; standard ab initio
	// reference tables).
	if math.Abs(r-0.989) > 0.002 {
		t.Errorf("r(OH) %.4f Å, want 0.989", r)
	}
	// Files: the final geometry and one trajectory frame per evaluation.
	dir := filepath.Join(filepath.Dir(in), "water-relax")
	m, err := molecule.ReadXYZFile(filepath.Join(dir, "water.xyz"))
	if err != nil {
		t.Fatal(err)
	}
	for i, a := range m.PositionsAngstrom() {
		for k := 0; k < 3; k++ {
			if math.Abs(a[k]-pos[i][k]) > 1e-7 {
				t.Errorf("geometry file differs from the JSON geometry at atom %d", i+1)
			}
		}
	}
	traj, err := os.ReadFile(filepath.Join(dir, "water.trajectory.xyz"))
	if err != nil {
		t.Fatal(err)
	}
	frames := strings.Count(string(traj), "\nstep ")
	if want := int(rep["gradient_evaluations"].(float64)); frames != want {
		t.Errorf("trajectory has %d frames, want one per evaluation (%d)", frames, want)
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 2 {
		var names []string
		for _, e := range entries {
			names = append(names, e.Name())
		}
		t.Errorf("output directory holds %v, want the geometry and the trajectory only", names)
	}
}

func sq(v float64) float64 { return v * v }

func TestRelaxTable(t *testing.T) {
	in := waterStart(t)
	outDir := filepath.Join(t.TempDir(), "results")
	out, code, err := runCLI(t, "relax", in, "--method", "hf", "--basis", "sto-3g", "--threads", "1", "--out", outDir, "--hold", "2-1-3")
	if code != exitOK {
		t.Fatalf("exit %d: %v\n%s", code, err, out)
	}
	for _, want := range []string{"converged", "bond lengths", "angles", "O1–H2", "H2–O1–H3", "held", filepath.Join(outDir, "water.xyz")} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
	m0, _ := molecule.ReadXYZFile(in)
	m1, err := molecule.ReadXYZFile(filepath.Join(outDir, "water.xyz"))
	if err != nil {
		t.Fatal(err)
	}
	a0, a1 := angleOf(m0), angleOf(m1)
	if math.Abs(a1-a0) > 0.01 {
		t.Errorf("held angle moved from %.4f° to %.4f°", a0, a1)
	}
}

// angleOf is the H–O–H angle of a water molecule (atoms O, H, H), degrees.
func angleOf(m *molecule.Molecule) float64 {
	p := m.Atoms
	var u, v [3]float64
	for k := 0; k < 3; k++ {
		u[k] = p[1].Position[k] - p[0].Position[k]
		v[k] = p[2].Position[k] - p[0].Position[k]
	}
	dot := u[0]*v[0] + u[1]*v[1] + u[2]*v[2]
	nu := math.Sqrt(u[0]*u[0] + u[1]*u[1] + u[2]*u[2])
	nv := math.Sqrt(v[0]*v[0] + v[1]*v[1] + v[2]*v[2])
	return math.Acos(dot/(nu*nv)) * 180 / math.Pi
}

func TestRelaxStepLimit(t *testing.T) {
	in := waterStart(t)
	out, code, err := runCLI(t, "relax", in, "--method", "hf", "--basis", "sto-3g", "--threads", "1", "--max-steps", "1", "--freeze", "1")
	if code != exitNotConverge {
		t.Fatalf("exit %d, want %d: %v\n%s", code, exitNotConverge, err, out)
	}
	geom := filepath.Join(filepath.Dir(in), "water-relax", "water.xyz")
	msg := err.Error()
	for _, want := range []string{"not converged", geom, "poise relax " + geom, "--max-steps 1", "--freeze 1", "--method hf"} {
		if !strings.Contains(msg, want) {
			t.Errorf("message lacks %q:\n%s", want, msg)
		}
	}
	m0, _ := molecule.ReadXYZFile(in)
	m1, err := molecule.ReadXYZFile(geom)
	if err != nil {
		t.Fatalf("last geometry not saved: %v", err)
	}
	// Atom 1 is frozen: the XYZ files round it identically (8 decimals).
	if d := m1.Atoms[0].Position[2] - m0.Atoms[0].Position[2]; math.Abs(d)*units.BohrAngstrom > 1e-8 {
		t.Errorf("frozen atom moved by %g Å", d*units.BohrAngstrom)
	}
	moved := false
	for k := 0; k < 3; k++ {
		if math.Abs(m1.Atoms[1].Position[k]-m0.Atoms[1].Position[k]) > 1e-6 {
			moved = true
		}
	}
	if !moved {
		t.Error("the saved geometry is the starting one")
	}
}

func TestRelaxUsageErrors(t *testing.T) {
	in := waterStart(t)
	for _, c := range []struct {
		args []string
		msg  string
	}{
		{[]string{"--converge", "loose"}, "--converge"},
		{[]string{"--max-steps", "0"}, "--max-steps"},
		{[]string{"--hold", "1-4"}, "atom 4 does not exist"},
		{[]string{"--hold", "1"}, "--hold"},
		{[]string{"--hold", "1-2-1"}, "twice"},
		{[]string{"--freeze", "x"}, "not an atom number"},
		{[]string{"--freeze", "0"}, "does not exist"},
		{[]string{"--out", filepath.Dir(in)}, "overwrite"},
		{[]string{"--hold", "1-2", "--hold", "2-1"}, "held twice"},
	} {
		args := append([]string{"relax", in, "--method", "hf", "--basis", "sto-3g", "--threads", "1"}, c.args...)
		out, code, err := runCLI(t, args...)
		if code != exitUsage {
			t.Errorf("%v: exit %d, want %d (%v)\n%s", c.args, code, exitUsage, err, out)
			continue
		}
		if !strings.Contains(err.Error(), c.msg) {
			t.Errorf("%v: message %q lacks %q", c.args, err, c.msg)
		}
	}
}

func TestShellWord(t *testing.T) {
	for _, c := range [][2]string{{"hf", "hf"}, {"6-31g*", "'6-31g*'"}, {"a b", "'a b'"}, {"it's", `'it'\''s'`}, {"", "''"}, {"dir/x.xyz", "dir/x.xyz"}} {
		if got := shellWord(c[0]); got != c[1] {
			t.Errorf("shellWord(%q) = %s, want %s", c[0], got, c[1])
		}
	}
}
