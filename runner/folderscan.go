package runner

import (
	"errors"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"

	"rankplan/internal/infile"
	"rankplan/runner/folder"
)

// maxFolderEntries bounds the entries of a run folder that verify lists: a run folder
// holds at most a dozen files, so a folder with more is refused without reading further.
const maxFolderEntries = 1000

// tempName matches the temporary name a file is written under before it is linked into
// place (audit.CreateTemp): "." + name + ".tmp-" + 16 hex digits.
var tempName = regexp.MustCompile(`^\.(.+)\.tmp-[0-9a-f]{16}$`)

// checkFolderEntries fails the integrity of a run folder that holds anything its log does
// not name: every entry of dir must be a regular file (not a symbolic link, whatever it
// points to, nor a folder, pipe, socket or device), named by the log (known). With
// allowExtra an extra regular file is accepted, as a warning; a link or special file
// never is, and neither is a link in place of a file the log names (its own check
// refuses it). In a folder whose run did not finish (unfinished), a file its writer
// creates, or a temporary file of one, is what the stopped run left before its record:
// a warning, since the folder already fails as incomplete. Each finding names its file;
// a folder with more than maxFolderEntries entries is one failure.
func checkFolderEntries(r *VerifyReport, dir string, known map[string]bool, kind *folder.Kind, unfinished, allowExtra bool) {
	d, err := os.Open(dir)
	if err != nil {
		r.add("folder", Fail, ClassIntegrity, "", "cannot list the folder: %v", unwrapPathError(err))
		return
	}
	entries, err := d.ReadDir(maxFolderEntries + 1)
	d.Close()
	if len(entries) > maxFolderEntries {
		r.add("folder", Fail, ClassIntegrity, "", "the folder holds more than %d entries; a run folder holds only the files its log names", maxFolderEntries)
		return
	}
	if err != nil && !errors.Is(err, io.EOF) {
		r.add("folder", Fail, ClassIntegrity, "", "cannot list the folder: %v", unwrapPathError(err))
		return
	}
	slices.SortFunc(entries, func(a, b fs.DirEntry) int { return strings.Compare(a.Name(), b.Name()) })
	clean := true
	for _, e := range entries {
		name, typ := e.Name(), e.Type()
		if known[name] || kind.Files(name) {
			continue
		}
		clean = false
		shown := infile.Printable(name)
		switch {
		case typ&fs.ModeSymlink != 0:
			target, _ := os.Readlink(filepath.Join(dir, name))
			r.add("folder", Fail, ClassIntegrity, name, "%s is a symbolic link (to %s): a run folder holds regular files only, and a link is never followed or accepted",
				shown, infile.Printable(target))
		case !typ.IsRegular():
			r.add("folder", Fail, ClassIntegrity, name, "%s is %s, not a regular file: a run folder holds regular files only", shown, infile.Kind(typ))
		case unfinished && leftBehind(kind, name):
			r.add("folder", Warn, "", name, "%s is not named by the log: the stopped run wrote it before its record", shown)
		case allowExtra:
			r.add("folder", Warn, "", name, "%s is not named by the run's record; accepted as an extra regular file (--allow-extra)", shown)
		default:
			r.add("folder", Fail, ClassIntegrity, name, "%s is not named by the run's record: a run folder holds only the files its log names "+
				"(verify --allow-extra accepts extra regular files, as warnings)", shown)
		}
	}
	if clean {
		r.add("folder", Pass, "", "", "the folder holds the files the log names and no other")
	}
}

// leftBehind reports whether name is a file the writer of a folder of kind creates, or a
// temporary file of one.
func leftBehind(kind *folder.Kind, name string) bool {
	if m := tempName.FindStringSubmatch(name); m != nil {
		name = m[1]
	}
	return slices.Contains(kind.Writes, name) || kind.Files(name)
}
