package mapjob

import (
	"context"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/sink"
)

// lockFile is the run lock in a state folder: "pid host start" of the run
// that holds it.
const lockFile = "lock"

// ErrBusy is returned (wrapped) by Claim when another run holds the folder.
var ErrBusy = errors.New("another run is using this folder")

// Claim takes the output folder out (a local folder) for one run: it
// refuses a folder that holds files stipple did not write (unless force),
// and takes the run lock in its state folder, so two runs never write one
// folder at once. A lock left by a run that is gone (same host, process
// not alive) is taken over. release gives the lock back.
//
// A folder is stipple's when it is absent, empty, or holds the state
// folder (.stipple) that every run writes first.
//
// Taking over a lock left by a killed run removes the temporary files that
// run's unfinished writes left beside the tiles (sink.Dir.SweepTemp).
func Claim(out string, force bool) (release func(), err error) {
	state := filepath.Join(out, tiles.StateDir)
	if _, err := os.Stat(state); os.IsNotExist(err) && !force {
		if foreign := foreignFiles(out); len(foreign) > 0 {
			more := ""
			if len(foreign) > 5 {
				more = fmt.Sprintf(" and %d more", len(foreign)-5)
				foreign = foreign[:5]
			}
			return nil, fmt.Errorf("output: %s holds files stipple did not write (%s%s); choose an empty folder, or pass --force to write into it anyway (files of the same names are replaced)",
				out, strings.Join(foreign, ", "), more)
		}
	}
	if err := os.MkdirAll(state, 0o755); err != nil {
		return nil, fmt.Errorf("output: %w", err)
	}
	host, _ := os.Hostname()
	path := filepath.Join(state, lockFile)
	me := fmt.Sprintf("%d %s %s\n", os.Getpid(), host, time.Now().UTC().Format(time.RFC3339))
	dead := 0 // the process whose stale lock was taken over
	for attempt := 0; ; attempt++ {
		f, err := os.OpenFile(path, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
		if err == nil {
			_, werr := f.WriteString(me)
			if cerr := f.Close(); werr == nil {
				werr = cerr
			}
			if werr != nil {
				os.Remove(path)
				return nil, fmt.Errorf("output: %w", werr)
			}
			// With the lock held, half-written files a killed run left
			// beside the tiles (and in the old shared temporary folder)
			// are nobody's.
			if dead > 0 {
				sink.NewDir(out).SweepTemp(context.Background(), host, dead)
			} else {
				os.RemoveAll(filepath.Join(out, filepath.FromSlash(sink.TempDir)))
			}
			return func() {
				if b, err := os.ReadFile(path); err == nil && string(b) == me {
					os.Remove(path)
				}
			}, nil
		}
		if !errors.Is(err, fs.ErrExist) {
			return nil, fmt.Errorf("output: %w", err)
		}
		b, _ := os.ReadFile(path)
		pid, owner, since := parseLock(string(b))
		if attempt == 0 && owner == host && pid > 0 && !sink.Running(pid) {
			os.Remove(path) // the run that held it is gone
			dead = pid
			continue
		}
		return nil, fmt.Errorf("output: %s: %w (pid %d on %s, since %s); wait for it to finish, or remove %s if that run is gone",
			out, ErrBusy, pid, owner, since, path)
	}
}

func parseLock(s string) (pid int, host, since string) {
	f := strings.Fields(s)
	if len(f) >= 1 {
		pid, _ = strconv.Atoi(f[0])
	}
	if len(f) >= 2 {
		host = f[1]
	}
	if len(f) >= 3 {
		since = f[2]
	}
	return pid, host, since
}

// foreignFiles lists the names in folder dir (top level), sorted; none for
// an absent or empty folder.
func foreignFiles(dir string) []string {
	ents, err := os.ReadDir(dir)
	if err != nil {
		return nil
	}
	var names []string
	for _, e := range ents {
		names = append(names, e.Name())
	}
	sort.Strings(names)
	return names
}

// writerFile, in a part's state folder, names the process that is writing
// through it ("pid host"); it is removed when that process returns.
const writerFile = "writer"

// markWriter notes in state that this process writes the part's tiles into
// out, and returns the function that takes the note away. A note found at
// the start was left by a process that was killed: the temporary files its
// unfinished writes left beside the tiles are removed first
// (sink.Dir.SweepTemp; only that process's, so parts running at once into
// one folder are not disturbed). Parts take no lock (several share one
// output, and a rescheduled part may start on another host), so this is
// how a killed part's leftovers go.
func markWriter(ctx context.Context, state string, out sink.Sink) (done func(), err error) {
	d, ok := out.(*sink.Dir)
	if !ok {
		return func() {}, nil // a bucket's Put leaves nothing half-written
	}
	path := filepath.Join(state, writerFile)
	if b, err := os.ReadFile(path); err == nil {
		if pid, host, _ := parseLock(string(b)); pid > 0 {
			if _, err := d.SweepTemp(ctx, host, pid); err != nil {
				return nil, err
			}
		}
	}
	if err := os.MkdirAll(state, 0o755); err != nil {
		return nil, fmt.Errorf("output: %w", err)
	}
	host, _ := os.Hostname()
	if err := tiles.WriteFileAtomic(path, []byte(fmt.Sprintf("%d %s\n", os.Getpid(), host))); err != nil {
		return nil, err
	}
	return func() { os.Remove(path) }, nil
}
