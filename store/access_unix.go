//go:build unix

package store

import "syscall"

// canWrite reports whether this process may write path (file or folder),
// by the permissions the kernel applies (a read-only mount included).
func canWrite(path string) bool {
	return syscall.Access(path, 0x2) == nil // W_OK
}
