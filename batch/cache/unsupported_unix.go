//go:build unix

package cache

import (
	"errors"
	"syscall"
)

func isUnsupported(err error) bool {
	return errors.Is(err, syscall.EINVAL) || errors.Is(err, syscall.ENOTSUP)
}
