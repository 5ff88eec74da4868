package main

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"github.com/spf13/cobra"

	"gridstage/report"
)

func init() { extraCommands = append(extraCommands, newReportCmd) }

func newReportCmd() *cobra.Command {
	var (
		out      string
		maxChart int
		pf       pointFlags
	)
	cmd := &cobra.Command{
		Use:   "report PATH [--out FILE.html] [--point N | --where name=value]",
		Short: "Write one self-contained HTML page judging every chain of a run",
		Long: `Write one HTML file for PATH (an output folder of gridstage run, one of its
files, or the JSON of gridstage discretize --json) with the run's provenance,
a summary table per job, a verdict per chain (sound / use with care / do not
use, in words, symbol and colour), warnings, and the figures. The page loads
nothing from anywhere and prints cleanly to PDF.`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if maxChart < 1 {
				return badInput("--max-figures %d is out of range: want an integer ≥ 1", maxChart)
			}
			sel, err := pf.selection(cmd)
			if err != nil {
				return err
			}
			run, err := loadRun(args[0], sel)
			if err != nil {
				return err
			}
			if out == "" {
				out = defaultReportPath(args[0])
			}
			var buf bytes.Buffer
			if err := report.Write(&buf, run, report.Options{MaxFigureChains: maxChart}); err != nil {
				return err
			}
			if err := writeAtomic(out, buf.Bytes()); err != nil {
				return err
			}
			fmt.Fprintln(cmd.OutOrStdout(), out)
			return nil
		},
	}
	cmd.Flags().StringVar(&out, "out", "", "HTML file to write (default: report.html in the output folder, or FILE.report.html beside a file)")
	cmd.Flags().IntVar(&maxChart, "max-figures", 12, "draw figures for at most this many chains, the worst first")
	pf.register(cmd)
	return cmd
}

// defaultReportPath puts the report inside an output folder, or beside a
// single file.
func defaultReportPath(path string) string {
	if info, err := os.Stat(path); err == nil && info.IsDir() {
		return filepath.Join(path, "report.html")
	}
	return strings.TrimSuffix(path, filepath.Ext(path)) + ".report.html"
}
