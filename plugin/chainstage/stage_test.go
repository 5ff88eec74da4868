package chainstage

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	goplugin "github.com/hashicorp/go-plugin"

	"gridstage/manifests"
	"gridstage/plugin"
)

const manifest = `run: test-harbour
processes:
  - name: dividends
    kind: ar1
    mean: 0.0179
    rho: -0.139
    sigma: 0.0348
    states: 5
    sweep:
      vary:
        states: [5, 7]
  - name: wages
    kind: ar1
    rho: 0.9
    sigma: 0.1
    states: 4
`

// connect serves a chain stage in-process through go-plugin's test
// connection and returns the host side.
func connect(t *testing.T) plugin.Stage {
	t.Helper()
	client, _ := goplugin.TestPluginGRPCConn(t, false, map[string]goplugin.Plugin{plugin.PluginName: &plugin.GRPCPlugin{Impl: &Stage{}}})
	t.Cleanup(func() { client.Close() })
	raw, err := client.Dispense(plugin.PluginName)
	if err != nil {
		t.Fatal(err)
	}
	return raw.(plugin.Stage)
}

func TestDiscretizeManifestWithArrow(t *testing.T) {
	s := connect(t)
	ctx := context.Background()
	d, err := s.Describe(ctx)
	if err != nil || d.Name != Name || !d.Can(plugin.CapDiscretize) || !d.Can(plugin.CapArrowStream) {
		t.Fatalf("Describe = %+v, %v", d, err)
	}
	out := t.TempDir()
	disc, err := s.Discretize(ctx, plugin.DiscretizeRequest{Manifest: []byte(manifest), SourceName: filepath.Join(out, "m.yaml"), OutDir: out, StreamArrow: true})
	if err != nil {
		t.Fatal(err)
	}
	if len(disc.Chains) != 3 {
		t.Fatalf("%d chains, want 3", len(disc.Chains))
	}
	m, err := manifests.Parse(strings.NewReader(manifest), "m.yaml", out)
	if err != nil {
		t.Fatal(err)
	}
	loader := &plugin.FileLoader{}
	for i, ref := range disc.Chains {
		job := m.Jobs[i]
		if ref.SpecHash != job.SpecHash || ref.Process != job.Process || ref.Point != job.Point || ref.ManifestHash != m.Hash {
			t.Errorf("chain %d: ref %+v does not match job %s/%d", i, ref, job.Process, job.Point)
		}
		if _, err := os.Stat(ref.Path); err != nil {
			t.Errorf("chain %d: %v", i, err)
		}
		data, err := loader.Load(ctx, ref)
		if err != nil {
			t.Fatalf("chain %d: %v", i, err)
		}
		streamed, hash, err := plugin.ReadChainArrow(disc.Arrow[ref.ChainHash], nil)
		if err != nil {
			t.Fatalf("chain %d: %v", i, err)
		}
		// The streamed chain is the written chain, number for number: its
		// chain hash recomputes to the reference's.
		if hash != ref.ChainHash || plugin.DataHash(streamed) != ref.ChainHash || plugin.DataHash(data) != ref.ChainHash {
			t.Errorf("chain %d: hashes differ: ref %s, metadata %s, streamed %s", i, ref.ChainHash, hash, plugin.DataHash(streamed))
		}
	}
	if disc.Chains[1].Params["states"] != 7 {
		t.Errorf("sweep point 1 params %v, want states 7", disc.Chains[1].Params)
	}
}

func TestDiscretizeJobSpecReproducesTheManifestChain(t *testing.T) {
	s := connect(t)
	ctx := context.Background()
	m, err := manifests.Parse(strings.NewReader(manifest), "m.yaml", ".")
	if err != nil {
		t.Fatal(err)
	}
	whole, err := s.Discretize(ctx, plugin.DiscretizeRequest{Manifest: []byte(manifest), OutDir: t.TempDir()})
	if err != nil {
		t.Fatal(err)
	}
	spec, err := m.Jobs[2].Spec()
	if err != nil {
		t.Fatal(err)
	}
	one, err := s.Discretize(ctx, plugin.DiscretizeRequest{JobSpec: spec, OutDir: t.TempDir()})
	if err != nil {
		t.Fatal(err)
	}
	if len(one.Chains) != 1 || one.Chains[0].ChainHash != whole.Chains[2].ChainHash || one.Chains[0].SpecHash != whole.Chains[2].SpecHash {
		t.Fatalf("job spec chain %+v, manifest chain %+v", one.Chains, whole.Chains[2])
	}
	if one.Chains[0].ManifestHash != "" {
		t.Errorf("a lone job spec has no manifest hash, got %q", one.Chains[0].ManifestHash)
	}
}

func TestDiscretizeBadInput(t *testing.T) {
	s := connect(t)
	ctx := context.Background()
	bad := strings.Replace(manifest, "rho: 0.9", "rho: 1.9", 1)
	_, err := s.Discretize(ctx, plugin.DiscretizeRequest{Manifest: []byte(bad), SourceName: "harbour.yaml", OutDir: t.TempDir()})
	if !errors.Is(err, plugin.ErrBadRequest) || !strings.Contains(err.Error(), "harbour.yaml:14:10: processes[1].rho") {
		t.Errorf("bad manifest: err = %v", err)
	}
	_, err = s.Discretize(ctx, plugin.DiscretizeRequest{JobSpec: []byte(`{"kind": "ar1"`), OutDir: t.TempDir()})
	if !errors.Is(err, plugin.ErrBadRequest) {
		t.Errorf("bad job spec: err = %v", err)
	}
	_, err = s.Discretize(ctx, plugin.DiscretizeRequest{Manifest: []byte(manifest)})
	if !errors.Is(err, plugin.ErrBadRequest) || !strings.Contains(err.Error(), "output folder") {
		t.Errorf("no output folder: err = %v", err)
	}
	if _, err := s.Estimate(ctx, plugin.EstimateRequest{Model: "burnside"}); !errors.Is(err, plugin.ErrUnsupported) {
		t.Errorf("Estimate: err = %v, want ErrUnsupported", err)
	}
}

func TestFileLoaderDetectsChanges(t *testing.T) {
	out := t.TempDir()
	m, err := manifests.Parse(strings.NewReader(manifest), "m.yaml", out)
	if err != nil {
		t.Fatal(err)
	}
	refs, err := WriteSets(context.Background(), m, out)
	if err != nil {
		t.Fatal(err)
	}
	ref := refs[0]
	cases := []struct {
		name string
		edit func(r *plugin.ChainRef)
		want string
	}{
		{"file hash", func(r *plugin.ChainRef) { r.FileHash = strings.Repeat("0", 64) }, "content hash of"},
		{"chain hash", func(r *plugin.ChainRef) { r.ChainHash = refs[1].ChainHash }, "chain hash of point 0"},
		{"point", func(r *plugin.ChainRef) { r.Point = 9 }, "has no sweep point 9"},
	}
	for _, tc := range cases {
		r := ref
		tc.edit(&r)
		_, err := (&plugin.FileLoader{}).Load(context.Background(), r)
		if !errors.Is(err, plugin.ErrChainMismatch) || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: err = %v, want ErrChainMismatch mentioning %q", tc.name, err, tc.want)
		}
	}
	// A transitions file swapped for another set's fails as well.
	trans := strings.Replace(ref.Path, ".points.", ".transitions.", 1)
	other, _ := os.ReadFile(strings.Replace(refs[2].Path, ".points.", ".transitions.", 1))
	os.WriteFile(trans, other, 0o644)
	if _, err := (&plugin.FileLoader{}).Load(context.Background(), ref); !errors.Is(err, plugin.ErrChainMismatch) {
		t.Errorf("swapped transitions: err = %v, want ErrChainMismatch", err)
	}
}
