package main

import (
	"os"
	"syscall"
)

// stdoutClosed reports whether standard output was closed when the process
// started. The Go runtime opens /dev/null for reading and writing on a
// standard descriptor it finds closed, so a report written there would
// vanish with no error; a shell's >/dev/null opens it for writing only, and
// is a wish to throw the report away. /dev/null opened for reading and
// writing by the caller (Python's subprocess.DEVNULL does) looks the same,
// and is refused too.
func stdoutClosed() bool {
	var st, null syscall.Stat_t
	if syscall.Fstat(1, &st) != nil || syscall.Stat(os.DevNull, &null) != nil {
		return false
	}
	if st.Mode&syscall.S_IFMT != syscall.S_IFCHR || st.Rdev != null.Rdev {
		return false
	}
	fl, _, errno := syscall.Syscall(syscall.SYS_FCNTL, 1, syscall.F_GETFL, 0)
	return errno == 0 && fl&syscall.O_ACCMODE == syscall.O_RDWR
}
