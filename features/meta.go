package features

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"
	"strings"
)

// InputFile is one input file named in a sidecar, with its SHA-256.
type InputFile struct {
	Path   string `json:"path"`
	Bytes  int64  `json:"bytes"`
	SHA256 string `json:"sha256"`
}

// Meta is the JSON sidecar written beside a table (<table>.meta.json): what
// is needed to reproduce it.
type Meta struct {
	Library string      `json:"library"`
	Version string      `json:"version"` // features.Version
	Config  Config      `json:"config"`
	Anchor  string      `json:"anchor"` // config.anchor in words: "epoch" or "start"
	Records []string    `json:"records"`
	Inputs  []InputFile `json:"inputs"`
	Columns []Column    `json:"columns"`
	// Failed lists records that could not be processed, with the error.
	Failed map[string]string `json:"failed,omitempty"`
	// Notes holds free remarks (for example "start time unknown: time_utc is
	// elapsed time since the Unix epoch" for records without a start).
	Notes []string `json:"notes,omitempty"`
}

// MarshalJSON writes a column with its kind as a word.
func (c Column) MarshalJSON() ([]byte, error) {
	return json.Marshal(struct {
		Name   string `json:"name"`
		Kind   string `json:"kind"`
		Family string `json:"family,omitempty"`
		Doc    string `json:"doc,omitempty"`
	}{c.Name, c.Kind.String(), c.Family, c.Doc})
}

// SidecarPath returns the sidecar path for a table path: the path with
// ".meta.json" appended (for a partitioned dataset directory, inside it is
// not used: the sidecar sits beside the directory).
func SidecarPath(table string) string {
	return strings.TrimRight(table, string(filepath.Separator)) + ".meta.json"
}

// WriteSidecar writes m as indented JSON to SidecarPath(table).
func WriteSidecar(table string, m Meta) error {
	m.Library = "tidalbeat"
	m.Version = Version
	m.Anchor = m.Config.Anchor.String()
	b, err := json.MarshalIndent(m, "", "  ")
	if err != nil {
		return fmt.Errorf("features: sidecar: %w", err)
	}
	if err := os.WriteFile(SidecarPath(table), append(b, '\n'), 0o644); err != nil {
		return fmt.Errorf("features: sidecar: %w", err)
	}
	return nil
}

// RecordFiles returns the files that make up the record at path: the file
// itself for EDF, BDF and CSV; for a WFDB record (given with or without
// .hea) its header and every file beside it named <record>.<ext> (signal and
// annotation files), sorted.
func RecordFiles(path string) ([]string, error) {
	switch strings.ToLower(filepath.Ext(path)) {
	case ".edf", ".bdf", ".rec", ".csv":
		if _, err := os.Stat(path); err != nil {
			return nil, fmt.Errorf("features: %w", err)
		}
		return []string{path}, nil
	}
	base := strings.TrimSuffix(path, ".hea")
	files, err := filepath.Glob(globEscape(base) + ".*")
	if err != nil {
		return nil, fmt.Errorf("features: %w", err)
	}
	var out []string
	for _, f := range files {
		if st, err := os.Stat(f); err == nil && st.Mode().IsRegular() && !strings.HasSuffix(f, ".meta.json") {
			out = append(out, f)
		}
	}
	if len(out) == 0 {
		return nil, fmt.Errorf("features: record %s: no files: %w", path, os.ErrNotExist)
	}
	sort.Strings(out)
	return out, nil
}

func globEscape(s string) string {
	r := strings.NewReplacer("*", `\*`, "?", `\?`, "[", `\[`)
	return r.Replace(s)
}

// HashFiles returns each file's size and SHA-256.
func HashFiles(paths ...string) ([]InputFile, error) {
	out := make([]InputFile, 0, len(paths))
	for _, p := range paths {
		f, err := os.Open(p)
		if err != nil {
			return nil, fmt.Errorf("features: hashing: %w", err)
		}
		h := sha256.New()
		n, err := io.Copy(h, f)
		f.Close()
		if err != nil {
			return nil, fmt.Errorf("features: hashing %s: %w", p, err)
		}
		out = append(out, InputFile{Path: p, Bytes: n, SHA256: hex.EncodeToString(h.Sum(nil))})
	}
	return out, nil
}
