package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"log/slog"
	"os"
	"os/signal"
	"path/filepath"
	"runtime"
	"strings"
	"syscall"
	"time"

	"github.com/spf13/cobra"

	"gridstage/batch"
	"gridstage/batch/cache"
	"gridstage/batch/shard"
	"gridstage/formats"
	"gridstage/internal/logging"
	"gridstage/internal/plural"
	"gridstage/internal/progress"
	"gridstage/manifests"
)

func init() { extraCommands = append(extraCommands, newRunCmd) }

func newRunCmd() *cobra.Command {
	var (
		out, format, cacheDir, shardFlag, logFormat, root string
		workers                                           int
		force                                             bool
	)
	cmd := &cobra.Command{
		Use:   "run MANIFEST [--out DIR]",
		Short: "Solve every job of a run manifest and write the chains with their provenance",
		Long: `Solve every job (process × sweep point) of a run manifest and write, per
process, Parquet (or Arrow) tables of transitions, states, diagnostics,
summaries and sweep points, plus run.json listing each job with its spec
hash, chain hash and status. Exit status 0 only if every job succeeded.

The output goes to --out, else to the manifest's output folder; a relative
one lies beneath the output root (--output-root, else $GRIDSTAGE_OUTPUT_ROOT,
else the current folder), never beside the manifest.

Solved jobs are kept in a content-addressed cache (by spec hash), so a
re-run or a run resumed after a crash solves nothing twice; when the output
folder already holds this manifest's complete output (run.json with the same
manifest hash and tool version), nothing is rewritten unless --force. The cache lives
in --cache, else $GRIDSTAGE_CACHE, else the user cache folder
(~/.cache/gridstage); --cache off disables it.

On a Slurm array job the share of jobs is taken from the array variables;
--shard I/N sets it by hand. Merge shard outputs with "gridstage merge".`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			m, err := manifests.Load(args[0])
			if err != nil {
				var list manifests.ErrorList
				if errors.As(err, &list) || errors.Is(err, os.ErrNotExist) {
					return &usageError{msg: err.Error()}
				}
				return badInput("%v", err)
			}
			if out == "" {
				out = m.OutputDir(outputRoot(root))
			}
			opt := batch.Options{Out: out, Workers: workers, Force: force, Advise: true}
			if cmd.Flags().Changed("format") {
				f, err := formats.ParseFormat(format)
				if err != nil {
					return badInput("--format %q is not recognised: want parquet or arrow", format)
				}
				opt.Format = &f
			}
			if workers < 0 {
				return badInput("--workers %d is out of range: want 0 (every core) or more", workers)
			}
			leanGC()
			if workers > 0 {
				// K workers use K cores in all: K jobs solved at once, and
				// the writing, hashing and compression of the output
				// (which run beside the solves) share the same cores, as
				// on a cluster node granted K cores.
				runtime.GOMAXPROCS(workers)
			}
			if opt.Shard, err = shard.Resolve(shardFlag, os.Getenv); err != nil {
				return badInput("--shard: %v", err)
			}
			if err := choice("log-format", logFormat, logging.Formats); err != nil {
				return err
			}
			stderr := cmd.ErrOrStderr()
			total := len(opt.Shard.Jobs(len(m.Jobs)))
			if opt.Shard.Count == 0 {
				total = len(m.Jobs)
			}
			if logFormat == "json" {
				total = 0 // no bar: every line on stderr is JSON
			}
			bar := progress.New(total, stderr, "solving")
			defer bar.Close()
			log, err := logging.New(bar.Writer(), logFormat, slog.LevelInfo)
			if err != nil {
				return badInput("%v", err)
			}
			opt.Logger, opt.Progress = log, bar.Done
			if dir := cacheFolder(cacheDir); dir != "" {
				c, err := cache.Open(dir)
				if err != nil {
					log.Warn("cache unavailable; solving everything", "folder", dir, "error", err)
				} else {
					opt.Cache = c
				}
			}
			ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
			defer stop()
			start := time.Now()
			res, err := batch.Run(ctx, m, opt)
			bar.Close()
			switch {
			case res != nil && logFormat == "json":
				logRunWarnings(log, res)
				if err := printRunSummaryJSON(cmd.OutOrStdout(), m, res, time.Since(start)); err != nil {
					return err
				}
			case res != nil:
				printRunSummary(cmd.OutOrStdout(), m, res, time.Since(start))
			}
			var folderErr *batch.OutputFolderError
			if errors.As(err, &folderErr) {
				return badInput("%v", err)
			}
			if err != nil {
				return &exitCodeError{code: exitFailure, err: err}
			}
			return nil
		},
	}
	fs := cmd.Flags()
	fs.StringVar(&out, "out", "", "output folder (default: the manifest's output folder, beneath the output root)")
	outputRootFlag(cmd, &root)
	fs.StringVar(&format, "format", "", "output format: parquet or arrow (default: the manifest's, else parquet)")
	fs.IntVar(&workers, "workers", 0, "cores to use: jobs solved at once, with the output written on the same cores (default: every core)")
	fs.StringVar(&cacheDir, "cache", "", "cache folder, or off (default: $GRIDSTAGE_CACHE, else the user cache folder)")
	fs.StringVar(&shardFlag, "shard", "", "run share I of N of the jobs, as I/N (default: from Slurm array variables, else all)")
	fs.StringVar(&logFormat, "log-format", "text", "log format: text, or json for JSON lines on stderr (errors included) and the summary as one JSON object on stdout")
	fs.BoolVar(&force, "force", false, "rewrite the output even when run.json says it is up to date")
	return cmd
}

// cacheFolder resolves the cache location; "" means no cache.
func cacheFolder(flag string) string {
	if flag == "off" {
		return ""
	}
	if d := cache.Dir(flag); d != "" {
		return d
	}
	if d, err := os.UserCacheDir(); err == nil {
		return filepath.Join(d, "gridstage")
	}
	return ""
}

// paramText writes swept values as " (rho=0.9, sigma=0.1)", or "".
func paramText(ps []manifests.Param) string {
	if len(ps) == 0 {
		return ""
	}
	parts := make([]string, len(ps))
	for i, p := range ps {
		parts[i] = fmt.Sprintf("%s=%g", p.Name, p.Value)
	}
	return " (" + strings.Join(parts, ", ") + ")"
}

func printRunSummary(w io.Writer, m *manifests.Manifest, r *batch.Result, took time.Duration) {
	jobs := r.Jobs
	if r.UpToDate {
		fmt.Fprintf(w, "run %q: %s, output in %s is up to date (same manifest hash and tool version, every file's bytes as recorded); --force rewrites it\n",
			m.Run, plural.Count(jobs, "job", "jobs"), r.Dir)
		return
	}
	if r.Stale != "" {
		fmt.Fprintf(w, "note: the output already in %s was not intact (%s); solving again\n", r.Dir, r.Stale)
	}
	fmt.Fprintf(w, "run %q: %s (%d solved, %d from cache, %d failed) in %s, shard %s\n",
		m.Run, plural.Count(jobs, "job", "jobs"), r.Solved, r.Cached, r.Failed, took.Round(time.Millisecond), r.Record.Shard)
	switch {
	case r.ShortJobs > 0:
		fmt.Fprintf(w, "warning: in %d of %d %s, states holding at least 0.1%% of the stationary mass matched fewer moments than requested (proven infeasible there on those grids); `gridstage report` shows which\n", r.ShortJobs, jobs, plural.Noun(jobs, "job", "jobs"))
		for _, a := range r.Advice {
			fmt.Fprintf(w, "  %s: %s; most at point %d%s, %d of %d states fell back\n    advice for that job: %s\n",
				a.Process, plural.Count(a.Jobs, "job", "jobs"), a.Worst.Point, paramText(a.Worst.Params), a.Fallbacks, a.States, a.Text)
		}
	case r.FallbackJobs > 0 && !r.UpToDate:
		fmt.Fprintf(w, "note: in %d of %d %s, some states matched fewer moments than requested (proven infeasible there), each holding less than 0.1%% of the stationary mass: the grids carry the moments wherever the chains spend their time\n", r.FallbackJobs, jobs, plural.Noun(jobs, "job", "jobs"))
	}
	for _, s := range r.Sets {
		for _, f := range s.Files {
			if f.Table == formats.TablePoints {
				fmt.Fprintf(w, "  %s  (%s)\n", f.Path, plural.Count(int(f.Rows), "point", "points"))
			}
		}
	}
	fmt.Fprintf(w, "  %s\n", filepath.Join(r.Dir, batch.RecordFile))
}
