//go:build !unix

package cache

func isUnsupported(error) bool { return true }
