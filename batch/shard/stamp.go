package shard

import (
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"

	"gridstage/internal/atomicfile"
	"gridstage/internal/version"
)

// StampFile is the name of the file a finished shard run leaves in its
// output folder.
const StampFile = "shard.json"

// Stamp says which share of which run a shard's output folder holds. A run
// writes it last, after every output file is in place, so a folder with a
// stamp is a complete shard; merge uses the stamps to check that the
// folders it combines are every shard of one run, each once.
type Stamp struct {
	// Shard is "I/N".
	Shard string `json:"shard"`
	// ManifestHash identifies the run's manifest.
	ManifestHash string `json:"manifest_hash"`
	// Numeric is the numeric version the shard's chains were solved under
	// (internal/version.Numeric): shards of one run must share it.
	Numeric string `json:"numeric_version"`
	// Jobs is the number of jobs in the whole run, ShardJobs the number in
	// this shard.
	Jobs      int `json:"jobs"`
	ShardJobs int `json:"shard_jobs"`
}

// WriteStamp records in dir that shard s of the run with the given
// manifest hash and job count finished. The file is written under a
// temporary name, synced and renamed into place.
func WriteStamp(dir string, s Shard, manifestHash string, jobs int) error {
	st := Stamp{Shard: s.String(), ManifestHash: manifestHash, Numeric: version.Numeric, Jobs: jobs, ShardJobs: len(s.Jobs(jobs))}
	b, err := json.MarshalIndent(st, "", "  ")
	if err != nil {
		return err
	}
	b = append(b, '\n')
	if err := atomicfile.WriteBytes(filepath.Join(dir, StampFile), b, 0o666); err != nil {
		return fmt.Errorf("shard: %w", err)
	}
	return nil
}

// ErrNoStamp means a folder has no stamp: it is not a finished shard.
var ErrNoStamp = errors.New("shard: no " + StampFile + " (the shard's run did not finish, or the folder is not a shard output)")

// ReadStamp reads and checks the stamp in dir, returning its shard too.
func ReadStamp(dir string) (Stamp, Shard, error) {
	path := filepath.Join(dir, StampFile)
	b, err := os.ReadFile(path)
	if errors.Is(err, fs.ErrNotExist) {
		return Stamp{}, Shard{}, fmt.Errorf("%s: %w", dir, ErrNoStamp)
	}
	if err != nil {
		return Stamp{}, Shard{}, fmt.Errorf("shard: %w", err)
	}
	var st Stamp
	if err := json.Unmarshal(b, &st); err != nil {
		return Stamp{}, Shard{}, fmt.Errorf("shard: %s: %v", path, err)
	}
	s, err := Parse(st.Shard)
	if err != nil {
		return Stamp{}, Shard{}, fmt.Errorf("shard: %s: field shard: %v", path, err)
	}
	if st.Jobs < 0 || st.ShardJobs != len(s.Jobs(st.Jobs)) {
		return Stamp{}, Shard{}, fmt.Errorf("shard: %s: shard %s of %d jobs should hold %d, stamp says %d", path, s, st.Jobs, len(s.Jobs(max(st.Jobs, 0))), st.ShardJobs)
	}
	return st, s, nil
}
