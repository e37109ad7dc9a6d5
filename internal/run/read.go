package run

import (
	"fmt"
	"io"

	"github.com/scangate/scangate/internal/units"
)

// ReadInput reads a whole input of a command that takes one file, or - for standard
// input, refusing it above maxBytes (--max-file-size) without reading more than one
// byte past the limit. name is how reports call it.
func ReadInput(path string, stdin io.Reader, maxBytes int) (name string, data []byte, err error) {
	in := Input{name: StdinName}
	if path == "-" {
		in.data, in.err = ReadLimited(stdin, maxBytes)
	} else {
		in = readFile(path, maxBytes)
	}
	switch {
	case in.err != nil:
		return in.name, nil, fmt.Errorf("cannot read %s: %v", in.name, in.err)
	case len(in.data) > maxBytes:
		return in.name, nil, fmt.Errorf("%s is larger than the limit of %s bytes; raise --max-file-size if it is meant to be this large", in.name, units.Num(int64(maxBytes)))
	}
	return in.name, in.data, nil
}
