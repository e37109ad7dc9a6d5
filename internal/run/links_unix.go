//go:build unix

package run

import (
	"os"
	"syscall"
)

// hardLinks is how many names the file has; 1 where the system does not say.
func hardLinks(info os.FileInfo) uint64 {
	if st, ok := info.Sys().(*syscall.Stat_t); ok {
		return uint64(st.Nlink)
	}
	return 1
}
