package sink

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
	"sync"
	"sync/atomic"
	"syscall"
	"time"
)

// Dir is a sink in a local folder. Put writes the file once, under a
// temporary name of its own in the file's own folder (TempName: a dot-file,
// created with O_EXCL and mode 0644, so no chmod), and renames it into
// place within that folder (rename is atomic within a file system, POSIX
// rename(2)): a reader sees the old file or the whole new one. Content
// types are not stored.
//
// A process killed mid-Put can leave a temporary file beside a tile. Such
// files are never listed (List skips them), so they are never published,
// indexed or taken for tiles, and the next run that takes over the dead
// run's lock removes them (SweepTemp).
//
// Writing beside the tile, rather than in one shared temporary folder, is
// what keeps the file system cheap when millions of tiles are written by
// several workers: one shared folder is locked by every create and every
// rename out of it, and ext4 looks for free inodes near a file's folder,
// so a single folder sends every create searching past the full groups
// (BENCHMARKS.md, "Tile files").
//
// PutFresh (FreshPutter), which the tile writer uses, goes one step further
// for a path that holds nothing yet: the file itself is created (O_EXCL),
// written and closed, with no temporary name and no rename. Put and
// PutFresh make their system calls directly (open, write, close, rename),
// not through os.File.
type Dir struct {
	root string
	made sync.Map // folders known to exist
}

// tempPrefix begins the name of every temporary file Put writes.
const tempPrefix = ".put-"

// tempToken tells this process's temporary names from another's sharing
// the folder (several parts of a sharded render, or hosts on a network
// file system): host, process id and start time; tempSeq tells its own
// apart.
var (
	tempToken = TempToken(hostName(), os.Getpid()) + fmt.Sprintf("%x-", time.Now().UnixNano()&0xffffff)
	tempSeq   atomic.Int64
)

func hostName() string {
	h, _ := os.Hostname()
	return h
}

// TempToken is how the temporary names of the process pid on host begin
// (after the folder): SweepTemp removes the files of a process by it.
func TempToken(host string, pid int) string {
	var h uint32 = 2166136261 // FNV-1a, 32 bits
	for i := 0; i < len(host); i++ {
		h = (h ^ uint32(host[i])) * 16777619
	}
	return fmt.Sprintf("%s%08x-%d-", tempPrefix, h, pid)
}

// TempPath returns a new temporary file name in folder dir for a file that
// will be renamed to base: it begins with this process's token (so
// SweepTemp removes it once the process is gone and IsTemp keeps it out of
// listings) and ends with base (so its owner can tell it apart).
func TempPath(dir, base string) string {
	return filepath.Join(dir, tempToken+strconv.FormatInt(tempSeq.Add(1), 36)+"."+base)
}

// SweepGoneTemp removes, from folder dir alone (not its subfolders), the
// temporary files of processes on this host that are no longer running,
// and returns how many it removed. It is for folders no lock guards, such
// as a batch's top folder, where a run killed between writing and renaming
// an index page would otherwise leave the half-written file for good.
// Files of running processes and of other hosts are left alone.
func SweepGoneTemp(dir string) int {
	entries, err := os.ReadDir(dir)
	if err != nil {
		return 0
	}
	host := hostName()
	n := 0
	for _, e := range entries {
		name := e.Name()
		if e.IsDir() || !IsTemp(name) {
			continue
		}
		// .put-<host hash>-<pid>-…: the token TempToken makes.
		var hash uint32
		var pid int
		if _, err := fmt.Sscanf(name[len(tempPrefix):], "%08x-%d-", &hash, &pid); err != nil || pid <= 0 {
			continue
		}
		if !strings.HasPrefix(name, TempToken(host, pid)) || pid == os.Getpid() || Running(pid) {
			continue
		}
		if os.Remove(filepath.Join(dir, name)) == nil {
			n++
		}
	}
	return n
}

// Running reports whether process pid exists on this host (signal 0:
// POSIX kill(2) checks the process without sending anything; EPERM means
// it exists). A lock or a temporary file of a process that is not running
// is nobody's.
func Running(pid int) bool {
	p, err := os.FindProcess(pid)
	if err != nil {
		return false
	}
	err = p.Signal(syscall.Signal(0))
	return err == nil || errors.Is(err, syscall.EPERM)
}

// IsTemp reports whether a file name (the last element of a path) is a
// temporary file of an unfinished Put.
func IsTemp(name string) bool { return strings.HasPrefix(name, tempPrefix) }

// NewDir returns the sink for folder root; nothing is created until Put.
func NewDir(root string) *Dir { return &Dir{root: root} }

// Root is the folder.
func (d *Dir) Root() string { return d.root }

func (d *Dir) String() string { return d.root }

// TempDir is where link links before renaming, and where Put wrote its
// temporary files before they moved beside the tiles: inside stipple's
// state folder (.stipple, which is never published), on the same file
// system as the tiles. Several processes may share it: names are unique.
const TempDir = ".stipple/put"

func (d *Dir) full(p string) (string, error) {
	if err := CheckPath(p); err != nil {
		return "", err
	}
	return filepath.Join(d.root, filepath.FromSlash(p)), nil
}

// Put implements Sink.
func (d *Dir) Put(ctx context.Context, p string, data []byte, contentType, cacheControl string) error {
	if err := ctx.Err(); err != nil {
		return err
	}
	full, err := d.full(p)
	if err != nil {
		return err
	}
	return d.replace(full, data)
}

// replace writes data to a temporary file beside full and renames it
// into place.
func (d *Dir) replace(full string, data []byte) error {
	dir := filepath.Dir(full)
	var tmp string
	var err error
	for try := 0; ; try++ {
		tmp = filepath.Join(dir, tempToken+strconv.FormatInt(tempSeq.Add(1), 36))
		err = writeNew(d, tmp, data)
		if err == nil || !os.IsExist(err) || try == 9 {
			break
		}
	}
	if err != nil {
		return fmt.Errorf("sink: %w", err)
	}
	if err := renameFile(tmp, full); err != nil {
		os.Remove(tmp)
		return fmt.Errorf("sink: %w", err)
	}
	return nil
}

// PutFresh implements FreshPutter: the tile file itself is created with
// O_EXCL, written and closed (three system calls, and one folder entry
// made instead of two made and one removed); when it exists, Put replaces
// it. A failed write removes the file it created.
func (d *Dir) PutFresh(ctx context.Context, p string, data []byte, contentType, cacheControl string) error {
	if err := ctx.Err(); err != nil {
		return err
	}
	full, err := d.full(p)
	if err != nil {
		return err
	}
	err = writeNew(d, full, data)
	if err == nil {
		return nil
	}
	if os.IsExist(err) {
		return d.replace(full, data)
	}
	return fmt.Errorf("sink: %w", err)
}

// mkdir makes folder dir, trying a single mkdir before MkdirAll.
func (d *Dir) mkdir(dir string) error {
	if err := os.Mkdir(dir, 0o755); err != nil && !os.IsExist(err) {
		return os.MkdirAll(dir, 0o755)
	}
	return nil
}

// create opens file full for writing with mode 0644 and the extra flag
// (such as O_EXCL), making its folder when it is missing: the first
// file of a folder costs one failed open and one mkdir, every later one a
// single open.
func (d *Dir) create(full string, flag int) (*os.File, error) {
	flag |= os.O_WRONLY | os.O_CREATE
	f, err := os.OpenFile(full, flag, 0o644)
	if err == nil || !os.IsNotExist(err) {
		return f, err
	}
	if err := d.mkdir(filepath.Dir(full)); err != nil {
		return nil, err
	}
	return os.OpenFile(full, flag, 0o644)
}

// SweepTemp removes the temporary files that Puts of the process pid on
// host left in the folder (the process was killed mid-Put), and the old
// shared temporary folder; it returns how many files it removed. Only call
// it for a process that is gone: its files are nobody's.
func (d *Dir) SweepTemp(ctx context.Context, host string, pid int) (int, error) {
	os.RemoveAll(filepath.Join(d.root, filepath.FromSlash(TempDir)))
	token := TempToken(host, pid)
	n := 0
	err := filepath.WalkDir(d.root, func(full string, de fs.DirEntry, err error) error {
		if err != nil {
			if os.IsNotExist(err) {
				return nil
			}
			return err
		}
		if err := ctx.Err(); err != nil {
			return err
		}
		if de.IsDir() {
			if de.Name() == ".stipple" && full != d.root {
				return fs.SkipDir
			}
			return nil
		}
		if strings.HasPrefix(de.Name(), token) {
			if err := os.Remove(full); err != nil && !os.IsNotExist(err) {
				return err
			}
			n++
		}
		return nil
	})
	if err != nil {
		return n, fmt.Errorf("sink: %w", err)
	}
	return n, nil
}

// Exists implements Sink.
func (d *Dir) Exists(ctx context.Context, p string) (int64, bool, error) {
	full, err := d.full(p)
	if err != nil {
		return 0, false, err
	}
	fi, err := os.Stat(full)
	if err != nil {
		if os.IsNotExist(err) {
			return 0, false, nil
		}
		return 0, false, fmt.Errorf("sink: %w", err)
	}
	if !fi.Mode().IsRegular() {
		return 0, false, nil
	}
	return fi.Size(), true, nil
}

// Get implements Sink.
func (d *Dir) Get(ctx context.Context, p string) ([]byte, error) {
	full, err := d.full(p)
	if err != nil {
		return nil, err
	}
	b, err := os.ReadFile(full)
	if err != nil {
		return nil, fmt.Errorf("sink: %w", err)
	}
	return b, nil
}

// List implements Sink. Temporary files of unfinished Puts are skipped.
func (d *Dir) List(ctx context.Context, prefix string, fn func(path string, size int64) error) error {
	// Walk only the folder the prefix names, not the whole tree.
	base := prefix
	if i := strings.LastIndex(base, "/"); i >= 0 {
		base = base[:i]
	} else {
		base = ""
	}
	start := filepath.Join(d.root, filepath.FromSlash(base))
	type ent struct {
		p    string
		size int64
	}
	var all []ent
	err := filepath.WalkDir(start, func(full string, de fs.DirEntry, err error) error {
		if err != nil {
			if os.IsNotExist(err) && full == start {
				return fs.SkipAll
			}
			return err
		}
		if err := ctx.Err(); err != nil {
			return err
		}
		if de.IsDir() {
			if rel, _ := filepath.Rel(d.root, full); filepath.ToSlash(rel) == TempDir {
				return fs.SkipDir
			}
			return nil
		}
		if IsTemp(de.Name()) {
			return nil
		}
		rel, err := filepath.Rel(d.root, full)
		if err != nil {
			return err
		}
		rel = filepath.ToSlash(rel)
		if !strings.HasPrefix(rel, prefix) {
			return nil
		}
		fi, err := de.Info()
		if err != nil {
			return err
		}
		if fi.Mode().IsRegular() {
			all = append(all, ent{rel, fi.Size()})
		}
		return nil
	})
	if err != nil {
		return fmt.Errorf("sink: %w", err)
	}
	sort.Slice(all, func(i, j int) bool { return all[i].p < all[j].p })
	for _, e := range all {
		if err := fn(e.p, e.size); err != nil {
			return err
		}
	}
	return nil
}

// Delete implements Sink.
func (d *Dir) Delete(ctx context.Context, p string) error {
	full, err := d.full(p)
	if err != nil {
		return err
	}
	if err := os.Remove(full); err != nil && !os.IsNotExist(err) {
		return fmt.Errorf("sink: %w", err)
	}
	return nil
}

// Close implements Sink; a folder holds nothing open.
func (d *Dir) Close() error { return nil }

// link puts src's file at p into d as a hard link (through a temporary
// name and a rename, so it is atomic like Put): no data is copied. It
// fails across file systems; Copy then copies.
func (d *Dir) link(src *Dir, p string) error {
	from, err := src.full(p)
	if err != nil {
		return err
	}
	full, err := d.full(p)
	if err != nil {
		return err
	}
	tmpDir, err := d.makeDirs(full)
	if err != nil {
		return err
	}
	tmp := filepath.Join(tmpDir, fmt.Sprintf("link-%d-%d", os.Getpid(), linkSeq.Add(1)))
	if err := os.Link(from, tmp); err != nil {
		return err
	}
	if err := os.Rename(tmp, full); err != nil {
		os.Remove(tmp)
		return err
	}
	return nil
}

var linkSeq atomic.Int64

// makeDirs makes, once per folder, the folder of the file full and the
// folder for temporary files, whose path it returns.
func (d *Dir) makeDirs(full string) (tmpDir string, err error) {
	tmpDir = filepath.Join(d.root, filepath.FromSlash(TempDir))
	for _, m := range []string{filepath.Dir(full), tmpDir} {
		if _, ok := d.made.Load(m); !ok {
			if err := os.MkdirAll(m, 0o755); err != nil {
				return "", err
			}
			d.made.Store(m, true)
		}
	}
	return tmpDir, nil
}
