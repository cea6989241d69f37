package runner

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"syscall"
)

// missingParents returns the folders above out that do not exist yet, outermost first,
// spelled as out spells them; it creates nothing. It walks up from out's parent until it
// meets a folder that exists. A path on the way that exists but is not a folder (a file, a
// symbolic link whose target is missing), a loop of symbolic links or a folder that cannot
// be looked at is an error naming that path: the run would otherwise create through a file
// or follow the loop.
func missingParents(out string) ([]string, error) {
	var missing []string
	dir := filepath.Dir(filepath.Clean(out))
	for {
		fi, err := os.Stat(dir)
		switch {
		case err == nil && fi.IsDir():
			slices.Reverse(missing)
			return missing, nil
		case err == nil:
			return nil, &InputError{Err: fmt.Errorf("--out %s: %s is not a folder, so no folder can be made inside it", out, dir)}
		case errors.Is(err, fs.ErrNotExist):
			if _, lerr := os.Lstat(dir); lerr == nil {
				return nil, &InputError{Err: fmt.Errorf("--out %s: %s is a symbolic link whose target does not exist", out, dir)}
			}
		case errors.Is(err, syscall.ENOTDIR):
			// Some folder above dir is not a folder; the walk up names it.
		default:
			return nil, &InputError{Err: fmt.Errorf("--out %s: cannot use the folder %s: %w", out, dir, unwrapPath(err))}
		}
		missing = append(missing, dir)
		up := filepath.Dir(dir)
		if up == dir {
			return nil, &InputError{Err: fmt.Errorf("--out %s: no folder above it exists", out)}
		}
		dir = up
	}
}

// createParents creates the folders that [missingParents] found missing, outermost first,
// with mode 0755 under the umask, and returns those it created. A folder that appeared in
// the meantime is used as it is, and not reported as created.
func createParents(dirs []string) ([]string, error) {
	var created []string
	for _, d := range dirs {
		err := os.Mkdir(d, 0o755)
		if err == nil {
			created = append(created, d)
			continue
		}
		if errors.Is(err, fs.ErrExist) {
			if fi, serr := os.Lstat(d); serr == nil && fi.IsDir() {
				continue
			}
		}
		return created, fmt.Errorf("--out: create the folder %s: %w", d, unwrapPath(err))
	}
	return created, nil
}

// unwrapPath drops the *fs.PathError's own operation and path, which the messages above
// already name.
func unwrapPath(err error) error {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}
