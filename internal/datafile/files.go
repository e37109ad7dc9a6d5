// Package datafile finds a table's data files (Parquet and CSV, in folders that may name
// partitions as key=value) and streams their values into a survey.Table in bounded
// memory: Parquet row group by row group, a batch of rows at a time; CSV record by record.
package datafile

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"syscall"
)

// Format is a data file's format.
type Format string

// The formats survey reads.
const (
	Parquet Format = "parquet"
	CSV     Format = "csv"
)

// File is one data file of a table.
type File struct {
	Path   string   // as found, slash-separated
	Format Format   // from the extension
	Keys   []string // folder partition keys from the argument down (key=value folders)
	Values []string // their values
	Size   int64
}

// Limits bound what reading a data set may cost.
type Limits struct {
	MaxFileBytes   int64 // a data file larger than this is refused
	MaxFooterBytes int64 // a Parquet footer (the file's metadata) larger than this is refused
	MaxRecordBytes int   // a CSV line longer than this is refused
	MaxFiles       int   // more data files than this are refused
}

// DefaultLimits are generous for data and still stop a runaway read.
var DefaultLimits = Limits{MaxFileBytes: 1 << 40, MaxFooterBytes: 64 << 20, MaxRecordBytes: 1 << 20, MaxFiles: 100_000}

// Find lists the data files named by args: files as given, folders walked for *.parquet
// and *.csv (names starting with . or _ are skipped, as writers leave markers so),
// sorted by path within each argument. Folders named key=value anywhere in a file's path
// are its partition keys. Every file must be of one format, and every
// file's folder keys must be the same keys in the same order.
func Find(args []string, lim Limits) ([]File, error) {
	var out []File
	for _, arg := range args {
		info, err := os.Stat(arg)
		if err != nil {
			return nil, fmt.Errorf("cannot read %s: %v", filepath.ToSlash(arg), unwrap(err))
		}
		if !info.IsDir() {
			f, err := fileAt(arg, info)
			if err != nil {
				return nil, err
			}
			out = append(out, f)
			continue
		}
		var found []File
		err = filepath.WalkDir(arg, func(p string, d fs.DirEntry, err error) error {
			if err != nil {
				return fmt.Errorf("cannot read %s: %v", filepath.ToSlash(p), unwrap(err))
			}
			name := d.Name()
			if p != arg && (strings.HasPrefix(name, ".") || strings.HasPrefix(name, "_")) {
				if d.IsDir() {
					return filepath.SkipDir
				}
				return nil
			}
			if d.IsDir() || formatOf(p) == "" {
				return nil
			}
			info, err := os.Stat(p)
			if err != nil {
				return fmt.Errorf("cannot read %s: %v", filepath.ToSlash(p), unwrap(err))
			}
			f, err := fileAt(p, info)
			if err != nil {
				return err
			}
			found = append(found, f)
			if len(out)+len(found) > lim.MaxFiles {
				return fmt.Errorf("more than %d data files under %s; survey fewer at once", lim.MaxFiles, filepath.ToSlash(arg))
			}
			return nil
		})
		if err != nil {
			return nil, err
		}
		if len(found) == 0 {
			return nil, fmt.Errorf("%s holds no *.parquet or *.csv file", filepath.ToSlash(arg))
		}
		sort.Slice(found, func(i, j int) bool { return found[i].Path < found[j].Path })
		out = append(out, found...)
	}
	if len(out) == 0 {
		return nil, errors.New("name the data: files or folders of *.parquet or *.csv")
	}
	for _, f := range out[1:] {
		if f.Format != out[0].Format {
			return nil, fmt.Errorf("%s is %s and %s is %s; survey one format at a time", out[0].Path, out[0].Format, f.Path, f.Format)
		}
		if strings.Join(f.Keys, "/") != strings.Join(out[0].Keys, "/") {
			return nil, fmt.Errorf("%s lies under the folder keys %q and %s under %q; every file of a table must lie under the same key=value folders",
				out[0].Path, strings.Join(out[0].Keys, "/"), f.Path, strings.Join(f.Keys, "/"))
		}
	}
	for _, f := range out {
		if f.Size > lim.MaxFileBytes {
			return nil, fmt.Errorf("%s is larger than the limit of %d bytes; raise --max-data-size if it is meant to be this large", f.Path, lim.MaxFileBytes)
		}
	}
	return out, nil
}

func fileAt(p string, info os.FileInfo) (File, error) {
	name := filepath.ToSlash(p)
	if !info.Mode().IsRegular() {
		return File{}, fmt.Errorf("cannot read %s: not a regular file", name)
	}
	f := File{Path: name, Format: formatOf(p), Size: info.Size()}
	if f.Format == "" {
		return File{}, fmt.Errorf("%s: survey reads *.parquet and *.csv files; rename it or name its folder", name)
	}
	// Every key=value folder of the path counts, so files named one by one keep the keys
	// of the folders they lie in.
	for _, part := range strings.Split(filepath.ToSlash(filepath.Dir(p)), "/") {
		if k, v, ok := strings.Cut(part, "="); ok && k != "" {
			f.Keys = append(f.Keys, k)
			f.Values = append(f.Values, unescapeFolder(v))
		}
	}
	return f, nil
}

// unescapeFolder undoes the %XX escapes that writers put in key=value folder names.
func unescapeFolder(v string) string {
	if !strings.Contains(v, "%") {
		return v
	}
	var b strings.Builder
	for i := 0; i < len(v); i++ {
		if v[i] == '%' && i+2 < len(v) && isHex(v[i+1]) && isHex(v[i+2]) {
			b.WriteByte(unhex(v[i+1])<<4 | unhex(v[i+2]))
			i += 2
			continue
		}
		b.WriteByte(v[i])
	}
	return b.String()
}

func isHex(c byte) bool { return (c >= '0' && c <= '9') || (c|0x20 >= 'a' && c|0x20 <= 'f') }

func unhex(c byte) byte {
	if c <= '9' {
		return c - '0'
	}
	return c | 0x20 - 'a' + 10
}

func formatOf(p string) Format {
	switch strings.ToLower(filepath.Ext(p)) {
	case ".parquet":
		return Parquet
	case ".csv":
		return CSV
	}
	return ""
}

// open opens a data file without waiting (a FIFO without a writer would block) and
// refuses anything but a regular file.
func open(f File) (*os.File, error) {
	h, err := os.OpenFile(filepath.FromSlash(f.Path), os.O_RDONLY|syscall.O_NONBLOCK, 0)
	if err != nil {
		return nil, fmt.Errorf("cannot read %s: %v", f.Path, unwrap(err))
	}
	if info, err := h.Stat(); err != nil || !info.Mode().IsRegular() {
		h.Close()
		return nil, fmt.Errorf("cannot read %s: not a regular file", f.Path)
	}
	return h, nil
}

func unwrap(err error) error {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}
