package merge

import (
	"fmt"
	"sort"

	"gridstage/batch"
	"gridstage/batch/shard"
	"gridstage/formats"
)

// mergeRecords combines the shards' run records into the record of the
// whole run: every job in manifest order, the merged files, and shard
// "1/1", as a single-machine run of the manifest records.
func mergeRecords(dirs []string, jobs int, sets []formats.Result) (*batch.RunRecord, error) {
	var out *batch.RunRecord
	for _, d := range dirs {
		r, err := batch.ReadRecord(d)
		if err != nil {
			return nil, &InputError{Dir: d, Problem: "its run record cannot be read: " + err.Error()}
		}
		if !r.Succeeded {
			return nil, &InputError{Dir: d, Problem: "its run record says the shard did not succeed"}
		}
		if out == nil {
			out = &batch.RunRecord{Run: r.Run, Manifest: r.Manifest, ManifestHash: r.ManifestHash, Tool: r.Tool,
				Numeric: r.Numeric, Shard: shard.All.String(), Succeeded: true}
		} else if r.Numeric != out.Numeric {
			return nil, &InputError{Dir: d, Problem: fmt.Sprintf("its run record says numeric version %s, %s says %s", orNone(r.Numeric), dirs[0], orNone(out.Numeric))}
		} else if r.ManifestHash != out.ManifestHash {
			return nil, &InputError{Dir: d, Problem: "its run record names another manifest"}
		}
		out.Jobs = append(out.Jobs, r.Jobs...)
	}
	sort.Slice(out.Jobs, func(i, j int) bool { return out.Jobs[i].Index < out.Jobs[j].Index })
	if len(out.Jobs) != jobs {
		return nil, &InputError{Problem: fmt.Sprintf("the shards' run records list %d jobs, their stamps say %d", len(out.Jobs), jobs)}
	}
	for i, j := range out.Jobs {
		if j.Index != i {
			return nil, &InputError{Problem: fmt.Sprintf("the shards' run records do not list job %d exactly once", i)}
		}
	}
	out.Files = batch.FileRecords(sets)
	return out, nil
}
