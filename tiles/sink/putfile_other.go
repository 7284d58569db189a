//go:build !unix

package sink

import "os"

// writeNew creates file name (it must not exist) with mode 0644, writes
// data and closes it, making its folder when it is missing. When the
// write or close fails it removes the file it created.
func writeNew(d *Dir, name string, data []byte) error {
	f, err := d.create(name, os.O_EXCL)
	if err != nil {
		return err
	}
	_, werr := f.Write(data)
	cerr := f.Close()
	if werr == nil {
		werr = cerr
	}
	if werr != nil {
		os.Remove(name)
	}
	return werr
}

// renameFile renames old to new, replacing a file at new.
func renameFile(old, new string) error { return os.Rename(old, new) }
