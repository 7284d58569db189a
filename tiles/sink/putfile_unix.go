//go:build unix

package sink

import (
	"os"
	"path/filepath"
	"syscall"
)

// writeNew creates file name (it must not exist) with mode 0644 less the
// umask, writes data and closes it, making its folder when it is missing.
// When the write or close fails it removes the file it created.
//
// It makes the system calls itself. os.OpenFile on a regular file also
// makes four fcntl calls and an epoll_ctl (it tries to hand the file to the
// network poller, which refuses regular files) and sets a finalizer; with
// millions of tiles those were five of a Put's ten system calls
// (strace -c of the demo render; BENCHMARKS.md, "Tile files").
func writeNew(d *Dir, name string, data []byte) error {
	const flag = syscall.O_WRONLY | syscall.O_CREAT | syscall.O_EXCL | syscall.O_CLOEXEC
	fd, err := openRetry(name, flag)
	if err == syscall.ENOENT {
		if err := d.mkdir(filepath.Dir(name)); err != nil {
			return err
		}
		fd, err = openRetry(name, flag)
	}
	if err != nil {
		return &os.PathError{Op: "open", Path: name, Err: err}
	}
	for len(data) > 0 {
		n, err := syscall.Write(fd, data)
		if err == syscall.EINTR {
			continue
		}
		if err == nil && n == 0 {
			err = syscall.EIO
		}
		if err != nil {
			syscall.Close(fd)
			syscall.Unlink(name)
			return &os.PathError{Op: "write", Path: name, Err: err}
		}
		data = data[n:]
	}
	// close(2) is not retried on EINTR: on Linux the descriptor is gone
	// whatever close returns.
	if err := syscall.Close(fd); err != nil && err != syscall.EINTR {
		syscall.Unlink(name)
		return &os.PathError{Op: "close", Path: name, Err: err}
	}
	return nil
}

func openRetry(name string, flag int) (int, error) {
	for {
		fd, err := syscall.Open(name, flag, 0o644)
		if err != syscall.EINTR {
			return fd, err
		}
	}
}

// renameFile renames old to new, replacing a file at new. os.Rename first
// lstat's new to refuse replacing a folder; tile paths never name folders,
// and rename(2) itself refuses to put a file over a folder (EISDIR).
func renameFile(old, new string) error {
	for {
		err := syscall.Rename(old, new)
		if err == syscall.EINTR {
			continue
		}
		if err != nil {
			return &os.LinkError{Op: "rename", Old: old, New: new, Err: err}
		}
		return nil
	}
}
