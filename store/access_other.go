//go:build !unix

package store

// canWrite assumes a writable path where access(2) is not available; a
// write to a read-only file then fails with SQLite's own error.
func canWrite(string) bool { return true }
