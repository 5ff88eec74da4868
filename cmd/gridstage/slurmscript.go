package main

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"

	"github.com/spf13/cobra"

	"gridstage/batch/cache"
	"gridstage/batch/slurm"
	"gridstage/internal/plural"
	"gridstage/manifests"
)

func init() { extraCommands = append(extraCommands, newSlurmScriptCmd) }

func newSlurmScriptCmd() *cobra.Command {
	var (
		p                         slurm.Plan
		out, cacheDir, binary     string
		timeLimit, mem, partition string
		account                   string
	)
	cmd := &cobra.Command{
		Use:   "slurm-script MANIFEST --tasks N --out DIR [--cache DIR]",
		Short: "Write Slurm batch scripts that solve a manifest as an array job and merge the shards",
		Long: `Write ready-to-submit Slurm batch scripts for a cluster run of MANIFEST:

  DIR/slurm/solve.sbatch   an array job of N tasks; task I solves shard I/N
                           into DIR/shards/task-I
  DIR/slurm/merge.sbatch   merges the shards into DIR once every task has
                           succeeded (afterok)
  DIR/slurm/submit.sh      submits both; the job IDs go to DIR/slurm/jobs.env

The cache (--cache, else $GRIDSTAGE_CACHE) and DIR must be on storage every
node shares, and so must this gridstage binary (or give --binary), so that
a resubmitted task solves nothing twice and the merge job finds the shards.`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			m, err := manifests.Load(args[0])
			if err != nil {
				var list manifests.ErrorList
				if errors.As(err, &list) {
					return &usageError{msg: err.Error()}
				}
				return badInput("%v", err)
			}
			if out == "" {
				return badInput("--out is required: the run's output folder on shared storage")
			}
			dir := cache.Dir(cacheDir)
			if dir == "" || dir == "off" {
				return badInput("--cache is required (or set GRIDSTAGE_CACHE): a cache folder on storage every node shares")
			}
			if p.Tasks < 1 {
				return badInput("--tasks %d is out of range: want 1 or more array tasks", p.Tasks)
			}
			if p.CPUsPerTask < 1 {
				return badInput("--cpus-per-task %d is out of range: want 1 or more", p.CPUsPerTask)
			}
			if p.Tasks > len(m.Jobs) {
				fmt.Fprintf(cmd.ErrOrStderr(), "gridstage: %s for %s: using %s\n", plural.Count(p.Tasks, "task", "tasks"),
					plural.Count(len(m.Jobs), "job", "jobs"), plural.Count(len(m.Jobs), "task", "tasks"))
				p.Tasks = len(m.Jobs)
			}
			if binary == "" {
				if binary, err = os.Executable(); err != nil {
					return badInput("cannot find this gridstage binary (%v): give --binary", err)
				}
				if resolved, err := filepath.EvalSymlinks(binary); err == nil {
					binary = resolved
				}
			}
			abs := func(path string) string {
				a, err := filepath.Abs(path)
				if err != nil {
					return path
				}
				return a
			}
			p.Run, p.Jobs = m.Run, len(m.Jobs)
			p.Manifest, p.Binary, p.Out, p.Cache = abs(args[0]), abs(binary), abs(out), abs(dir)
			p.Time, p.Mem, p.Partition, p.Account = timeLimit, mem, partition, account
			if verify, _, err := cmd.Root().Find([]string{"verify"}); err == nil && verify != cmd.Root() {
				p.Verify = true
			}
			paths, err := slurm.Write(p)
			if err != nil {
				return badInput("%v", err)
			}
			w := cmd.OutOrStdout()
			fmt.Fprintf(w, "wrote Slurm scripts for run %q: %s in %s\n", m.Run, plural.Count(len(m.Jobs), "job", "jobs"), plural.Count(p.Tasks, "array task", "array tasks"))
			for _, path := range paths {
				fmt.Fprintf(w, "  %s\n", path)
			}
			fmt.Fprintf(w, "submit with: %s\n", paths[0])
			return nil
		},
	}
	fs := cmd.Flags()
	fs.IntVar(&p.Tasks, "tasks", 0, "number of array tasks (shards)")
	fs.StringVar(&out, "out", "", "output folder of the run, on shared storage")
	fs.StringVar(&cacheDir, "cache", "", "cache folder on shared storage (default: $GRIDSTAGE_CACHE)")
	fs.IntVar(&p.CPUsPerTask, "cpus-per-task", 1, "cores (and workers) per array task")
	fs.StringVar(&timeLimit, "time", "", "time limit per task, as sbatch --time takes it (default: the partition's)")
	fs.StringVar(&mem, "mem", "", "memory per task, as sbatch --mem takes it (default: the partition's)")
	fs.StringVar(&partition, "partition", "", "Slurm partition (default: the cluster's default)")
	fs.StringVar(&account, "account", "", "Slurm account to charge (default: yours)")
	fs.StringVar(&binary, "binary", "", "gridstage executable the jobs run (default: this one)")
	return cmd
}
