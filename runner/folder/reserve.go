package folder

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"time"

	"golang.org/x/sys/unix"
)

// reserveWait is the longest [reserve] waits for another process's lock.
const reserveWait = 30 * time.Second

// reserve takes an exclusive lock (flock(2)) on the folder that is to hold out and
// then checks that out still does not exist. The caller holds the lock while it writes
// its closing record, its head file and moves its working folder to out, and then calls
// release. So two runs racing for the same --out finish one after the other, and the
// second finds out taken before it writes its closing record: it records a failure
// instead, and no log left in a DIR.incomplete-XXXX folder claims success. The kernel
// drops the lock when the process ends, so a killed run leaves no stale lock. On a file
// system without flock the check is made without the lock (renameat2 still refuses to
// replace out, but a run that loses that narrower race has already written its closing
// record).
//
// It waits for a lock held by another process while ctx lasts, at most [reserveWait];
// a lock held the whole time is an error. out existing is an error wrapping [ErrExists].
func reserve(ctx context.Context, out string) (release func(), err error) {
	parent := filepath.Dir(filepath.Clean(out))
	d, err := os.Open(parent)
	if err != nil {
		return nil, fmt.Errorf("lock the folder %s: %w", parent, err)
	}
	deadline := time.Now().Add(reserveWait)
	for {
		err = unix.Flock(int(d.Fd()), unix.LOCK_EX|unix.LOCK_NB)
		if err == nil || !errors.Is(err, unix.EWOULDBLOCK) && !errors.Is(err, unix.EINTR) {
			break
		}
		if time.Now().After(deadline) {
			d.Close()
			return nil, fmt.Errorf("lock the folder %s: another process has held its lock for %v", parent, reserveWait)
		}
		select {
		case <-ctx.Done():
			d.Close()
			return nil, fmt.Errorf("lock the folder %s: %w", parent, ctx.Err())
		case <-time.After(5 * time.Millisecond):
		}
	}
	if err != nil && !errors.Is(err, unix.ENOLCK) && !errors.Is(err, unix.EOPNOTSUPP) && !errors.Is(err, unix.ENOSYS) {
		d.Close()
		return nil, fmt.Errorf("lock the folder %s: %w", parent, err)
	}
	if _, err := os.Lstat(out); err == nil {
		d.Close()
		return nil, fmt.Errorf("%s: %w (another process created it while this one ran)", out, ErrExists)
	}
	return func() { d.Close() }, nil
}
