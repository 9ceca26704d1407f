package main

import (
	"io"

	"github.com/olekukonko/tablewriter"
	"github.com/olekukonko/tablewriter/tw"
)

// writeTable renders rows under a header as a boxed text table. Headers are
// printed as given (no case change); numeric columns are right-aligned by
// the caller's formatting.
func writeTable(w io.Writer, header []string, rows [][]string) error {
	t := tablewriter.NewTable(w,
		tablewriter.WithHeaderAutoFormat(tw.Off),
		tablewriter.WithRowAlignment(tw.AlignRight),
		tablewriter.WithHeaderAlignment(tw.AlignCenter),
	)
	t.Header(header)
	if err := t.Bulk(rows); err != nil {
		return err
	}
	return t.Render()
}
