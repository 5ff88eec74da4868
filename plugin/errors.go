package plugin

import (
	"errors"
	"fmt"
)

// ErrUnsupported is returned for a call the stage does not implement; it
// crosses the wire as gRPC code Unimplemented.
var ErrUnsupported = errors.New("plugin: the stage does not support this call")

// ErrBadRequest marks a request the stage rejects as invalid (bad manifest,
// unknown model, parameter out of range); it crosses the wire as gRPC code
// InvalidArgument and the host exits with status 2.
var ErrBadRequest = errors.New("plugin: bad request")

// BadRequest returns an error wrapping ErrBadRequest with a message.
func BadRequest(format string, args ...any) error {
	return &requestError{msg: fmt.Sprintf(format, args...)}
}

type requestError struct{ msg string }

func (e *requestError) Error() string { return e.msg }
func (e *requestError) Unwrap() error { return ErrBadRequest }
