package main

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"

	"github.com/olekukonko/tablewriter"
	"github.com/spf13/cobra"

	"poise/energy/basis"
	"poise/energy/molecule"
)

// newBasisCmd is `poise basis`: the built-in basis-set library.
func newBasisCmd() *cobra.Command {
	cmd := &cobra.Command{
		Use:   "basis",
		Short: "list the built-in basis sets or show one",
		Long: "basis lists the Gaussian basis sets built into poise (all for elements among H–Kr)\n" +
			"and shows their shells, exponents, contraction coefficients and literature.",
		Args: cobra.NoArgs,
	}
	cmd.AddCommand(newBasisListCmd(), newBasisShowCmd())
	return cmd
}

func newBasisListCmd() *cobra.Command {
	return &cobra.Command{
		Use:   "list",
		Short: "list the built-in basis sets",
		Args:  cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			return writeBasisList(cmd.OutOrStdout())
		},
	}
}

func writeBasisList(w io.Writer) error {
	table := tablewriter.NewTable(w)
	table.Header("name", "functions", "role", "elements")
	for _, in := range basis.List() {
		if err := table.Append(in.Name, in.Functions, roleText(in.Role), elementRanges(in.Elements)); err != nil {
			return err
		}
	}
	if err := table.Render(); err != nil {
		return err
	}
	_, err := fmt.Fprintln(w, "Names are case-insensitive; 6-31G(d) and 6-31G(d,p) mean 6-31G* and 6-31G**.")
	return err
}

func newBasisShowCmd() *cobra.Command {
	return &cobra.Command{
		Use:   "show NAME [ELEMENT]",
		Short: "show a basis set, or its shells for one element",
		Long: "show summarizes a basis set element by element (contracted shells and number of\n" +
			"functions). Given an element (symbol or atomic number) it prints every shell with\n" +
			"its exponents (bohr⁻²) and contraction coefficients, and the papers they come from.",
		Args: cobra.RangeArgs(1, 2),
		RunE: func(cmd *cobra.Command, args []string) error {
			set, err := basis.Load(args[0])
			if err != nil {
				return usageErr(err)
			}
			w := bufio.NewWriter(cmd.OutOrStdout())
			if len(args) == 1 {
				writeBasisSummary(w, set)
				return w.Flush()
			}
			z, err := basisElement(set, args[1])
			if err != nil {
				return usageErr(err)
			}
			writeBasisElement(w, set, z)
			return w.Flush()
		},
	}
}

// basisElement reads an element argument (symbol or atomic number) that
// the set must cover.
func basisElement(set *basis.Set, arg string) (int, error) {
	covered := elementRanges(symbolsOf(set.Elements()))
	z, ok := molecule.ElementBySymbol(arg)
	if !ok {
		if n, err := strconv.Atoi(strings.TrimSpace(arg)); err == nil && molecule.Symbol(n) != "" {
			z, ok = n, true
		}
	}
	if !ok {
		return 0, fmt.Errorf("unknown element %q: give a symbol or atomic number; %s covers %s", arg, set.Name, covered)
	}
	if !set.Has(z) {
		var alternatives []string
		for _, in := range basis.List() {
			if in.Role == set.Role && containsString(in.Elements, molecule.Symbol(z)) {
				alternatives = append(alternatives, in.Name)
			}
		}
		msg := fmt.Sprintf("basis set %s has no functions for %s; it covers %s", set.Name, molecule.Symbol(z), covered)
		if len(alternatives) > 0 {
			msg += "; sets that cover " + molecule.Symbol(z) + ": " + strings.Join(alternatives, ", ")
		}
		return 0, errors.New(msg)
	}
	return z, nil
}

func writeBasisSummary(w io.Writer, set *basis.Set) {
	fmt.Fprintf(w, "%s — %s\n", set.Name, set.Description)
	fmt.Fprintf(w, "role %s; %s functions; elements %s\n\n", roleText(set.Role), set.Functions, elementRanges(symbolsOf(set.Elements())))
	for _, z := range set.Elements() {
		shells, _, _ := set.ElementShells(z)
		fmt.Fprintf(w, "  %-2s  %-16s → %3d functions\n", molecule.Symbol(z), basis.Composition(shells), basis.NumFunctions(shells))
	}
	fmt.Fprintf(w, "\nShells and references of one element: poise basis show %s ELEMENT\n", quoteArg(set.Name))
}

func writeBasisElement(w io.Writer, set *basis.Set, z int) {
	shells, refs, _ := set.ElementShells(z)
	fmt.Fprintf(w, "%s (%s) in %s: %s → %s\n", molecule.Symbol(z), molecule.ElementName(z), set.Name,
		basis.Composition(shells), plural(basis.NumFunctions(shells), set.Functions+" function"))
	for i, sh := range shells {
		fmt.Fprintf(w, "\nshell %d: %s, %s, %s\n", i+1, basis.AngularLetter(sh.L),
			plural(len(sh.Exponents), "primitive"), plural(sh.NumFunctions(), "function"))
		exps := alignDecimal(sh.Exponents)
		coefs := alignDecimal(sh.Coefficients)
		we := max(width(exps), len("exponent"))
		fmt.Fprintf(w, "  %-*s   %s\n", we, "exponent", "coefficient")
		for k := range exps {
			fmt.Fprintf(w, "  %-*s   %s\n", we, exps[k], coefs[k])
		}
	}
	if len(refs) > 0 {
		fmt.Fprintln(w, "\nreferences")
		for _, r := range refs {
			fmt.Fprintf(w, "  %s:\n", r.What)
			for _, c := range r.Cites {
				fmt.Fprintf(w, "    %s\n", c)
			}
		}
	}
}

// plural writes "1 primitive", "3 primitives".
func plural(n int, noun string) string {
	if n == 1 {
		return "1 " + noun
	}
	return strconv.Itoa(n) + " " + noun + "s"
}

// alignDecimal formats numbers in their shortest exact form, padded so that
// the decimal points line up.
func alignDecimal(v []float64) []string {
	s := make([]string, len(v))
	intWidth := 0
	for i, x := range v {
		s[i] = strconv.FormatFloat(x, 'g', -1, 64)
		intWidth = max(intWidth, intPart(s[i]))
	}
	for i := range s {
		s[i] = strings.Repeat(" ", intWidth-intPart(s[i])) + s[i]
	}
	return s
}

// intPart is the length of the part of a formatted number before its
// decimal point (or exponent).
func intPart(s string) int {
	if i := strings.IndexAny(s, ".e"); i >= 0 {
		return i
	}
	return len(s)
}

func width(s []string) int {
	n := 0
	for _, x := range s {
		n = max(n, len(x))
	}
	return n
}

// roleText explains a basis-set role.
func roleText(role string) string {
	switch role {
	case basis.RoleOrbital:
		return "orbital"
	case basis.RoleJFit:
		return "fitting (J)"
	case basis.RoleJKFit:
		return "fitting (JK)"
	}
	return role
}

// elementRanges writes element symbols compactly by runs of consecutive
// atomic numbers: "H–Ar, Ca–Kr".
func elementRanges(symbols []string) string {
	var zs []int
	for _, s := range symbols {
		if z, ok := molecule.ElementBySymbol(s); ok {
			zs = append(zs, z)
		}
	}
	var parts []string
	for i := 0; i < len(zs); {
		j := i
		for j+1 < len(zs) && zs[j+1] == zs[j]+1 {
			j++
		}
		switch {
		case j == i:
			parts = append(parts, molecule.Symbol(zs[i]))
		case j == i+1:
			parts = append(parts, molecule.Symbol(zs[i]), molecule.Symbol(zs[j]))
		default:
			parts = append(parts, molecule.Symbol(zs[i])+"–"+molecule.Symbol(zs[j]))
		}
		i = j + 1
	}
	return strings.Join(parts, ", ")
}

func symbolsOf(zs []int) []string {
	s := make([]string, len(zs))
	for i, z := range zs {
		s[i] = molecule.Symbol(z)
	}
	return s
}

func containsString(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

// quoteArg quotes a basis-set name for a shell command line when needed.
func quoteArg(s string) string {
	if strings.ContainsAny(s, "*()+, ") {
		return "'" + s + "'"
	}
	return s
}
