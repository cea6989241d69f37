package infile

import (
	"context"
	"io"
)

// ContextReader returns a reader of r that checks ctx before every read and fails with
// ctx's error once ctx is done, so that a loop reading a large input (through a buffer of
// B bytes) stops within B bytes after the context ends.
func ContextReader(ctx context.Context, r io.Reader) io.Reader {
	return &ctxReader{done: ctx.Done(), ctx: ctx, r: r}
}

type ctxReader struct {
	done <-chan struct{}
	ctx  context.Context
	r    io.Reader
}

func (c *ctxReader) Read(b []byte) (int, error) {
	select {
	case <-c.done:
		return 0, c.ctx.Err()
	default:
	}
	return c.r.Read(b)
}
