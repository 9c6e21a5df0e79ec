//go:build unix

package results

import "syscall"

// writable reports whether the process may create files in dir (access(2) with W_OK|X_OK).
func writable(dir string) error {
	return syscall.Access(dir, 0x2|0x1)
}
