package datafile

import (
	"slices"
	"strings"

	"github.com/scangate/scangate/internal/survey"
)

// Options say how to read a data set.
type Options struct {
	// PartitionBy names the partition key: one of the folder keys, or a column whose
	// value is each row's key. Empty: the folder keys, when the files lie under any.
	PartitionBy string
	Limits      Limits
	// Progress, when set, is told the bytes read so far of each file.
	Progress func(file int, done int64)
	// Skipped, when set, is told each column that is not measured (nested or repeated).
	Skipped func(file File, column string)
}

// Read streams every file into t, in order, and returns the name of the partition key
// ("" when the table is not partitioned).
func Read(files []File, t *survey.Table, o Options) (string, error) {
	key, column := keyOf(files, o.PartitionBy)
	for i, f := range files {
		fileKey := ""
		if column == "" && key != "" {
			fileKey = folderKey(f, o.PartitionBy)
		}
		progress := func(done int64) {
			if o.Progress != nil {
				o.Progress(i, done)
			}
		}
		var err error
		switch f.Format {
		case Parquet:
			err = readParquet(f, t, column, fileKey, o, progress)
		case CSV:
			err = readCSV(f, t, column, fileKey, o.Limits, progress)
		}
		if err != nil {
			return key, err
		}
	}
	return key, nil
}

// keyOf is the partition key's name and, when rows carry it, the column that holds it.
func keyOf(files []File, by string) (key, column string) {
	keys := files[0].Keys
	switch {
	case by != "" && slices.Contains(keys, by):
		return by, ""
	case by != "":
		return by, by
	case len(keys) > 0:
		return strings.Join(keys, "/"), ""
	}
	return "", ""
}

// folderKey is a file's partition key from its folders: the named key's value, or every
// value joined with "/".
func folderKey(f File, by string) string {
	if by != "" {
		return f.Values[slices.Index(f.Keys, by)]
	}
	return strings.Join(f.Values, "/")
}
