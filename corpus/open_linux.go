package corpus

import (
	"os"
	"syscall"
)

// Magic numbers of Linux's kernel file systems, from linux/magic.h.
var kernelFSNames = map[int64]string{
	0x9fa0:     "proc",
	0x62656572: "sysfs",
	0x64626720: "debugfs",
	0x74726163: "tracefs",
	0x27e0eb:   "cgroup",
	0x63677270: "cgroup2",
	0x73636673: "securityfs",
	0x6e736673: "nsfs",
	0xcafe4a11: "bpf",
	0x50495045: "pipefs",
	0x534f434b: "sockfs",
}

// kernelFS returns the name of the kernel file system f lives on (proc,
// sysfs, ...), or "" for an ordinary one. Files there report sizes of 0 or
// 4096 whatever they hold, and some wait for data or are used up by being
// read.
func kernelFS(f *os.File) string {
	// SyscallConn, not Fd, so that the descriptor keeps its mode.
	rc, err := f.SyscallConn()
	if err != nil {
		return ""
	}
	var st syscall.Statfs_t
	var serr error
	if err := rc.Control(func(fd uintptr) { serr = syscall.Fstatfs(int(fd), &st) }); err != nil || serr != nil {
		return ""
	}
	return kernelFSNames[int64(st.Type)]
}
