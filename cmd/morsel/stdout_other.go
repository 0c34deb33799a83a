//go:build !linux

package main

// stdoutClosed reports whether standard output was closed when the process
// started; only Linux is checked (see stdout_linux.go).
func stdoutClosed() bool { return false }
