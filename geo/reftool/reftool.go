// Package reftool finds what tests check against but the repository does
// not hold: external reference programs (GDAL's ogr2ogr, PROJ's cs2cs,
// chromium, poppler's pdfinfo and pdftoppm, pngcheck) and the shared data
// set in ../shared/data beside the repository root.
//
// A test whose reference is missing skips with a message naming what is
// missing, or fails when the environment variable STIPPLE_REQUIRE_TOOLS is
// "1" (as .ci/run sets it), so that CI never passes on skipped checks.
//
// The package imports nothing from the project, so any test may use it.
package reftool

import (
	"errors"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"testing"
)

// RequireEnv is the environment variable that turns a missing reference
// from a skip into a failure when set to "1".
const RequireEnv = "STIPPLE_REQUIRE_TOOLS"

// Required reports whether missing references fail tests instead of
// skipping them.
func Required() bool { return os.Getenv(RequireEnv) == "1" }

// Need returns the path of the external program name. When it is not on
// PATH the test skips, or fails when STIPPLE_REQUIRE_TOOLS=1.
func Need(tb testing.TB, name string) string {
	tb.Helper()
	p, err := exec.LookPath(name)
	if err != nil {
		missing(tb, fmt.Sprintf("%s not installed (not found on PATH)", name))
	}
	return p
}

// SharedData returns the path of ../shared/data/name relative to the
// repository root. When it is not there the test skips, or fails when
// STIPPLE_REQUIRE_TOOLS=1.
func SharedData(tb testing.TB, name string) string {
	tb.Helper()
	p, err := SharedPath(name)
	if err != nil {
		missing(tb, err.Error())
	}
	return p
}

// SharedPath returns the path of ../shared/data/name relative to the
// repository root, or an error naming the path when it is not there. It is
// for optional uses (extra fuzz seeds) that neither skip nor fail.
func SharedPath(name string) (string, error) {
	root, err := Root()
	if err != nil {
		return "", err
	}
	p := filepath.Join(filepath.Dir(root), "shared", "data", filepath.FromSlash(name))
	if _, err := os.Stat(p); err != nil {
		return "", fmt.Errorf("shared data %s not present (../shared/data beside the repository): %w", p, err)
	}
	return p, nil
}

// Root returns the repository root: the nearest folder at or above the
// working folder (a test's package folder) that holds go.mod.
func Root() (string, error) {
	dir, err := os.Getwd()
	if err != nil {
		return "", err
	}
	for {
		if _, err := os.Stat(filepath.Join(dir, "go.mod")); err == nil {
			return dir, nil
		}
		up := filepath.Dir(dir)
		if up == dir {
			return "", errors.New("reftool: no go.mod at or above the working folder")
		}
		dir = up
	}
}

// missing skips the test with msg, or fails it under STIPPLE_REQUIRE_TOOLS=1.
func missing(tb testing.TB, msg string) {
	tb.Helper()
	if Required() {
		tb.Fatalf("%s; required because %s=1", msg, RequireEnv)
		return // Fatalf does not return; a recording TB in tests may
	}
	tb.Skip(msg)
}
