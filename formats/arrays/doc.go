// Package arrays hands chains to other languages as plain arrays: one
// NumPy .npz archive and one MAT-file (level 5) per sweep point, and wide
// CSV tables per process, with the provenance of the Parquet or Arrow set
// they were read from.
//
// The encoders are written from the published format descriptions, with
// no reader or writer of those formats linked in:
//
//   - .npy: NumPy Enhancement Proposal 1, "A simple file format for NumPy
//     arrays" (format version 1.0); .npz is a ZIP archive (PKWARE
//     APPNOTE) of .npy members, stored uncompressed, one per array.
//   - MAT-file level 5: MathWorks, "MAT-File Format" (version 5 data
//     elements: miMATRIX with array flags, dimensions, name and real part).
//
// Every output is deterministic: the same set gives the same bytes (no
// timestamps in ZIP entries or MAT headers).
//
// The layout of every array and table is in docs/FORMATS.md ("Arrays for
// other languages").
package arrays
