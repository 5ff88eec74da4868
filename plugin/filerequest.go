package plugin

import (
	"bufio"
	"encoding/json"
	"io"
	"os"
	"path/filepath"
	"strconv"

	"gridstage/formats/arrays"
	"gridstage/solver"
)

// fileRequest is the layout of request.json (docs/FORMATS.md,
// "File-contract stages"). Paths are absolute.
type fileRequest struct {
	Contract string             `json:"contract"`
	Stage    string             `json:"stage"`
	Model    string             `json:"model"`
	Params   map[string]float64 `json:"params"`
	Chain    fileChain          `json:"chain"`
	Files    fileArrays         `json:"files"`
	Work     string             `json:"work"`
	Estimate string             `json:"estimate"`
}

type fileChain struct {
	ChainHash    string             `json:"chain_hash"`
	SpecHash     string             `json:"spec_hash"`
	ManifestHash string             `json:"manifest_hash,omitempty"`
	Process      string             `json:"process"`
	Point        int                `json:"point"`
	Swept        map[string]float64 `json:"swept,omitempty"`
	File         string             `json:"file"`
	FileHash     string             `json:"file_hash"`
	States       int                `json:"states"`
	Dim          int                `json:"dim"`
}

type fileArrays struct {
	Grid       string `json:"grid"`
	Transition string `json:"transition"`
	Stationary string `json:"stationary,omitempty"`
	Initial    string `json:"initial,omitempty"`
	Matched    string `json:"matched"`
	Params     string `json:"params"`
	Npz        string `json:"npz,omitempty"`
	Mat        string `json:"mat,omitempty"`
}

// writeRequest writes the request and the chain's arrays into the work
// folder and returns the request's path. The arrays are plain text, one
// matrix row per line, numbers separated by single spaces and written in
// the shortest form that reads back to the same float64 (so any correct
// reader gets every bit): grid.txt (states × dim), transition.txt
// (states × states, rows sum to one), stationary.txt (one probability per
// line; left out when the chain has no unique stationary distribution),
// initial.txt (when the chain has an initial distribution), matched.txt
// (moments matched per state) and params.txt (one "name value" per line,
// sorted by name). Given named arrays, it also writes them as chain.npz
// and chain.mat (formats/arrays).
func writeRequest(work, stage string, req EstimateRequest, in ChainInput, named []arrays.Array) (string, error) {
	d := in.Data
	n := d.States()
	at := func(name string) string { return filepath.Join(work, name) }
	r := fileRequest{
		Contract: FileContract, Stage: stage, Model: req.Model, Params: req.Params,
		Chain: fileChain{ChainHash: in.Ref.ChainHash, SpecHash: in.Ref.SpecHash, ManifestHash: in.Ref.ManifestHash,
			Process: in.Ref.Process, Point: in.Ref.Point, Swept: in.Ref.Params, File: in.Ref.Path, FileHash: in.Ref.FileHash,
			States: n, Dim: d.Dim},
		Files: fileArrays{Grid: at("grid.txt"), Transition: at("transition.txt"), Matched: at("matched.txt"), Params: at("params.txt")},
		Work:  work, Estimate: at(EstimateFile),
	}
	if r.Params == nil {
		r.Params = map[string]float64{}
	}
	if err := writeMatrix(r.Files.Grid, d.Grid, d.Dim); err != nil {
		return "", err
	}
	if err := writeMatrix(r.Files.Transition, d.Transition, n); err != nil {
		return "", err
	}
	if pi, err := solver.Stationary(d.Transition, n); err == nil {
		r.Files.Stationary = at("stationary.txt")
		if err := writeMatrix(r.Files.Stationary, pi, 1); err != nil {
			return "", err
		}
	}
	if d.Initial != nil {
		r.Files.Initial = at("initial.txt")
		if err := writeMatrix(r.Files.Initial, d.Initial, 1); err != nil {
			return "", err
		}
	}
	matched := make([]float64, len(d.Matched))
	for i, m := range d.Matched {
		matched[i] = float64(m)
	}
	if err := writeMatrix(r.Files.Matched, matched, 1); err != nil {
		return "", err
	}
	if err := writeLines(r.Files.Params, func(w *bufio.Writer) {
		for _, k := range sortedKeys(r.Params) {
			w.WriteString(k + " " + strconv.FormatFloat(r.Params[k], 'g', -1, 64) + "\n")
		}
	}); err != nil {
		return "", err
	}
	if named != nil {
		r.Files.Npz, r.Files.Mat = at("chain.npz"), at("chain.mat")
		if err := writeWith(r.Files.Npz, named, arrays.WriteNpz); err != nil {
			return "", err
		}
		if err := writeWith(r.Files.Mat, named, arrays.WriteMat); err != nil {
			return "", err
		}
	}
	b, err := json.MarshalIndent(r, "", "  ")
	if err != nil {
		return "", err
	}
	path := at(RequestFile)
	return path, os.WriteFile(path, append(b, '\n'), 0o666)
}

// writeWith writes the arrays with one of the encoders of formats/arrays.
func writeWith(path string, named []arrays.Array, encode func(io.Writer, []arrays.Array) error) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	w := bufio.NewWriter(f)
	if err := encode(w, named); err != nil {
		f.Close()
		return err
	}
	if err := w.Flush(); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

// writeMatrix writes v as rows of cols numbers.
func writeMatrix(path string, v []float64, cols int) error {
	return writeLines(path, func(w *bufio.Writer) {
		for i, x := range v {
			w.WriteString(strconv.FormatFloat(x, 'g', -1, 64))
			if (i+1)%cols == 0 {
				w.WriteByte('\n')
			} else {
				w.WriteByte(' ')
			}
		}
	})
}

func writeLines(path string, fill func(*bufio.Writer)) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	w := bufio.NewWriter(f)
	fill(w)
	if err := w.Flush(); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}
