package cache

import (
	"encoding/hex"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"reflect"
	"strings"
)

// EnvDir names the environment variable that gives the cache folder when
// no --cache flag is set.
const EnvDir = "GRIDSTAGE_CACHE"

// Dir returns the cache folder to use: flag when non-empty, else the value
// of GRIDSTAGE_CACHE; "" means no cache.
func Dir(flag string) string {
	if flag != "" {
		return flag
	}
	return os.Getenv(EnvDir)
}

// Cache is a cache folder. Its methods are safe for concurrent use by any
// number of goroutines and processes.
type Cache struct {
	dir string
	// Sync makes Put fsync each entry and its folder, so that an entry
	// survives a crash of the machine. Off by default: an fsync costs about
	// a millisecond here, more than reading a solved chain, and an entry a
	// crash leaves incomplete is not used: it fails its checksum, reads as
	// damaged, and is solved again. Atomic renames keep entries whole for
	// other processes whether or not Sync is set.
	Sync bool
}

// Open returns the cache in folder dir, creating the folder if needed.
func Open(dir string) (*Cache, error) {
	if dir == "" {
		return nil, errors.New("cache: empty folder name")
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, fmt.Errorf("cache: cannot create folder %s: %w", dir, pathErr(err))
	}
	abs, err := filepath.Abs(dir)
	if err != nil {
		return nil, fmt.Errorf("cache: %s: %w", dir, err)
	}
	return &Cache{dir: abs}, nil
}

// Folder returns the cache's folder as an absolute path.
func (c *Cache) Folder() string { return c.dir }

// DamagedError reports an entry that failed its checks: it reads as a miss,
// and the next Put of its key replaces it.
type DamagedError struct {
	Path   string
	Reason string
}

func (e *DamagedError) Error() string {
	return fmt.Sprintf("cache: damaged entry %s: %s", e.Path, e.Reason)
}

// KeyError reports a key that is not a hex SHA-256.
type KeyError struct{ Key string }

func (e *KeyError) Error() string {
	return fmt.Sprintf("cache: key %q is not 64 lowercase hex digits", e.Key)
}

// parseKey checks that key is a lowercase hex SHA-256 (so that it is also
// a safe file name) and returns its bytes.
func parseKey(key string) ([32]byte, error) {
	var k [32]byte
	if len(key) != 64 || strings.ToLower(key) != key {
		return k, &KeyError{key}
	}
	if _, err := hex.Decode(k[:], []byte(key)); err != nil {
		return k, &KeyError{key}
	}
	return k, nil
}

// path returns the file of the entry of a valid key (which may not exist).
func (c *Cache) path(key string) string {
	return filepath.Join(c.dir, key[:2], key+".entry")
}

// Get reads key's entry into the value v points to. It returns true on a
// hit. A missing entry, or one written for a type of another layout, is a
// miss with a nil error; a damaged entry is a miss with a *DamagedError.
// On a miss *v is unchanged. Treat any error as a miss: recompute and Put.
func (c *Cache) Get(key string, v any) (bool, error) {
	k, err := parseKey(key)
	if err != nil {
		return false, err
	}
	t := reflect.TypeOf(v)
	if t == nil || t.Kind() != reflect.Pointer {
		return false, fmt.Errorf("cache: Get needs a non-nil pointer, got %T", v)
	}
	fp, err := fingerprint(t.Elem())
	if err != nil {
		return false, err
	}
	path := c.path(key)
	b, err := os.ReadFile(path)
	if errors.Is(err, fs.ErrNotExist) {
		return false, nil
	}
	if err != nil {
		return false, fmt.Errorf("cache: read %s: %w", path, pathErr(err))
	}
	payload, err := open(b, k, fp)
	if err == errStale {
		return false, nil
	}
	if err != nil {
		return false, &DamagedError{Path: path, Reason: err.Error()}
	}
	// Decode into a fresh value so a failure leaves *v unchanged.
	fresh := reflect.New(t.Elem())
	if err := unmarshal(payload, fresh.Interface()); err != nil {
		return false, &DamagedError{Path: path, Reason: "payload does not decode: " + err.Error()}
	}
	reflect.ValueOf(v).Elem().Set(fresh.Elem())
	return true, nil
}

// Put stores the value v points to under key, replacing any entry. The
// entry appears whole or not at all (see the package documentation).
func (c *Cache) Put(key string, v any) error {
	k, err := parseKey(key)
	if err != nil {
		return err
	}
	payload, err := marshal(v)
	if err != nil {
		return err
	}
	fp, _ := fingerprint(reflect.TypeOf(v).Elem()) // checked by marshal
	return writeAtomic(c.path(key), seal(k, fp, payload), c.Sync)
}

// pathErr strips the path from an *fs.PathError, whose message would
// repeat the path the caller already names.
func pathErr(err error) error {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}
