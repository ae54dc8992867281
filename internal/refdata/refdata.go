// Package refdata locates reference material for tests: the shared directory
// beside the repository (PhysioNet records, open datasets) and optional
// databases named by environment variables, and finds a Python interpreter
// with scipy for cross-checks. Tests that need something absent are skipped
// with a message saying what to set; nothing here is used outside tests.
package refdata

import (
	"bytes"
	"encoding/json"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"sync"
	"testing"
)

// SharedEnv names the environment variable that overrides the location of
// the shared reference directory (default: ../shared beside the module root).
const SharedEnv = "TIDALBEAT_SHARED"

// Environment variables naming optional reference databases. Each points at
// a directory of WFDB records (.hea with their signal and annotation files).
const (
	MITDBEnv = "TIDALBEAT_MITDB" // more MIT-BIH Arrhythmia Database records
	NSTDBEnv = "TIDALBEAT_NSTDB" // MIT-BIH Noise Stress Test Database
	RRDBEnv  = "TIDALBEAT_RRDB"  // RR-interval databases (annotation-only records)
	RIPDBEnv = "TIDALBEAT_RIPDB" // recordings with RIP bands and scored breaths or events
)

// PythonEnv names the environment variable that selects the Python
// interpreter used for scipy cross-checks.
const PythonEnv = "TIDALBEAT_PYTHON"

// ModuleRoot returns the directory holding go.mod, found by walking up from
// the working directory (go test runs in the package directory).
func ModuleRoot() (string, error) {
	dir, err := os.Getwd()
	if err != nil {
		return "", err
	}
	for {
		if _, err := os.Stat(filepath.Join(dir, "go.mod")); err == nil {
			return dir, nil
		}
		parent := filepath.Dir(dir)
		if parent == dir {
			return "", fmt.Errorf("refdata: no go.mod above the working directory")
		}
		dir = parent
	}
}

// SharedDir returns the shared reference directory, or "" when absent.
func SharedDir() string {
	if d := os.Getenv(SharedEnv); d != "" {
		return d
	}
	root, err := ModuleRoot()
	if err != nil {
		return ""
	}
	d := filepath.Join(root, "..", "shared")
	if st, err := os.Stat(d); err == nil && st.IsDir() {
		return d
	}
	return ""
}

// Shared returns the path of rel inside the shared reference directory, or
// skips the test with a message when it is not there.
func Shared(t testing.TB, rel string) string {
	t.Helper()
	d := SharedDir()
	if d == "" {
		t.Skipf("reference directory not found: put the shared material at ../shared beside the repository or set %s", SharedEnv)
	}
	p := filepath.Join(d, rel)
	if _, err := os.Stat(p); err != nil {
		t.Skipf("reference file %s not found (%v); set %s to the shared directory", p, err, SharedEnv)
	}
	return p
}

// EnvDir returns the directory named by the environment variable env, or
// skips the test saying which variable to set for what.
func EnvDir(t testing.TB, env, what string) string {
	t.Helper()
	d := os.Getenv(env)
	if d == "" {
		t.Skipf("%s not set: point it at a directory of %s to run this validation", env, what)
	}
	if st, err := os.Stat(d); err != nil || !st.IsDir() {
		t.Fatalf("%s=%q is not a directory: %v", env, d, err)
	}
	return d
}

var (
	pyOnce sync.Once
	pyPath string
	pyErr  error
)

// findPython returns an interpreter that imports scipy: $TIDALBEAT_PYTHON,
// then Debian's /usr/bin/python3 (where apt-get install python3-scipy puts
// scipy), then python3 on PATH.
func findPython() (string, error) {
	pyOnce.Do(func() {
		cands := []string{os.Getenv(PythonEnv), "/usr/bin/python3", "python3"}
		for _, c := range cands {
			if c == "" {
				continue
			}
			p, err := exec.LookPath(c)
			if err != nil {
				continue
			}
			if exec.Command(p, "-c", "import scipy.signal, scipy.interpolate, numpy").Run() == nil {
				pyPath = p
				return
			}
		}
		pyErr = fmt.Errorf("no Python with scipy found (tried $%s, /usr/bin/python3, python3): apt-get install -y python3-scipy", PythonEnv)
	})
	return pyPath, pyErr
}

// Scipy runs a Python script with scipy available, feeding input as JSON on
// standard input and decoding the JSON the script prints into out. It skips
// the test when no interpreter with scipy is found.
func Scipy(t testing.TB, script string, input, out any) {
	t.Helper()
	py, err := findPython()
	if err != nil {
		t.Skipf("scipy cross-check skipped: %v", err)
	}
	in, err := json.Marshal(input)
	if err != nil {
		t.Fatalf("encode scipy input: %v", err)
	}
	cmd := exec.Command(py, "-c", script)
	cmd.Stdin = bytes.NewReader(in)
	var stdout, stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	if err := cmd.Run(); err != nil {
		t.Fatalf("scipy script failed: %v\n%s", err, stderr.String())
	}
	if err := json.Unmarshal(stdout.Bytes(), out); err != nil {
		t.Fatalf("decode scipy output: %v\n%s", err, stdout.String())
	}
}
