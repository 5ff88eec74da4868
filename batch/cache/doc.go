// Package cache keeps solved jobs on disk, addressed by their spec hash, so
// that re-running a manifest, or resuming a killed run, solves nothing it
// has already solved.
//
// A cache is a folder, shared by any number of processes on any number of
// machines (for example on a cluster's shared file system). Each entry is
// one file,
//
//	DIR/<first two hex digits of the key>/<key>.entry
//
// holding a self-checking envelope (see envelope.go): a magic string, the
// key, a fingerprint of the Go type stored, the payload length, the
// payload, and a SHA-256 of everything before it. A truncated, extended,
// bit-flipped or misplaced file fails the check and reads as a miss with a
// *DamagedError, so the caller recomputes and overwrites it.
//
// Put writes a temporary file in the entry's folder and renames it over the
// entry. Renaming within one folder is atomic on POSIX file systems and on
// NFS, so readers see either no entry, an old one, or the new one — never a
// torn one. Two processes writing the same key write the same bytes (jobs
// are deterministic), so whichever rename lands last is harmless. Put does
// not fsync unless Cache.Sync is set: the checksum already turns an entry
// cut short by a machine crash into a miss, and fsync would cost more than
// the solve it saves.
//
// Values are encoded by a small reflection codec (codec.go) that keeps
// every float64 bit for bit, including NaN payloads and negative zero, so a
// chain read from the cache is identical to the one computed.
package cache
