package ingest

import (
	"errors"
	"fmt"
	"os"
	"strings"
	"syscall"
	"unicode/utf8"
)

// OpenRegular opens a file named by a spec, a flag or an input list for
// reading, and only if it is a regular file. The file is opened with
// O_NONBLOCK, so that a named pipe (FIFO) or a device cannot block the open
// (a FIFO with no writer would block it for ever), then checked with
// fstat on the open descriptor, so that the file checked is the file read.
// A file that is not regular is refused with an error naming it and its
// kind; the caller adds the key or flag that named it. Reads of a regular
// file are not affected by O_NONBLOCK.
func OpenRegular(path string) (*os.File, os.FileInfo, error) {
	if strings.IndexByte(path, 0) >= 0 {
		return nil, nil, &FileError{Path: path, Reason: "a file name cannot contain a NUL byte"}
	}
	f, err := os.OpenFile(path, os.O_RDONLY|syscall.O_NONBLOCK, 0)
	if err != nil {
		return nil, nil, fileError(path, err)
	}
	st, err := f.Stat()
	if err != nil {
		f.Close()
		return nil, nil, fileError(path, err)
	}
	if !st.Mode().IsRegular() {
		f.Close()
		return nil, nil, &FileError{Path: path, Reason: fmt.Sprintf("not a regular file (%s); only regular files are read: give a file", modeName(st.Mode()))}
	}
	return f, st, nil
}

// FileError is a file refused by OpenRegular: the file and why.
type FileError struct {
	Path   string
	Reason string // without the file's name
	Err    error  // the system's error, if any
}

func (e *FileError) Error() string {
	return TermText(e.Path) + ": " + e.Reason // the whole path: it names the file to fix
}

func (e *FileError) Unwrap() error { return e.Err }

func fileError(path string, err error) error {
	var pe *os.PathError
	if errors.As(err, &pe) {
		err = pe.Err
	}
	return &FileError{Path: path, Reason: "cannot be read: " + err.Error(), Err: err}
}

// escapeText writes s with every byte that is not part of a valid UTF-8
// sequence as \xNN and, when controls is set, every control character as
// well: C0 controls (U+0000-U+001F, among them ESC, BEL, CR and LF) and DEL
// (U+007F) as \xNN, C1 controls (U+0080-U+009F, among them CSI) as \u00NN
// (ECMA-48 defines C0 and C1 as the characters a terminal acts on; the
// escapes are those of Go's %q). A backslash is kept as it is, so that text
// escaped once is left unchanged by a second pass (a message may quote a
// file name that was escaped already).
func escapeText(s string, controls bool) string {
	clean := utf8.ValidString(s)
	if clean && controls {
		for _, r := range s {
			if isControl(r) {
				clean = false
				break
			}
		}
	}
	if clean {
		return s
	}
	var b strings.Builder
	for i := 0; i < len(s); {
		r, n := utf8.DecodeRuneInString(s[i:])
		switch {
		case r == utf8.RuneError && n <= 1:
			fmt.Fprintf(&b, `\x%02x`, s[i])
		case controls && r < 0x80 && isControl(r):
			fmt.Fprintf(&b, `\x%02x`, r)
		case controls && isControl(r):
			fmt.Fprintf(&b, `\u%04x`, r)
		default:
			b.WriteString(s[i : i+n])
		}
		i += n
	}
	return b.String()
}

func isControl(r rune) bool { return r < 0x20 || r == 0x7f || r >= 0x80 && r < 0xa0 }

// TermText renders text that comes from an input (a file name, an
// attribute, a station or site name, a CSV value) for a terminal: invalid
// UTF-8 bytes and control characters are escaped (escapeText), so that a
// crafted name or attribute cannot move the cursor, retitle the window or
// ring the bell. Every text from an input that reaches stdout or stderr as
// text goes through it; JSON and HTML outputs escape the raw value for
// their own format instead.
func TermText(s string) string { return escapeText(s, true) }

// PathText is a file name as text for the manifest and the saved states:
// the name itself when it is valid UTF-8, else the name with every byte that
// is not part of a valid UTF-8 sequence written as \xNN (so that names
// differing in such bytes stay different, and the same name gives the same
// text on every run; JSON would replace them all by U+FFFD). Control
// characters are kept: JSON escapes them itself. It is TermText without the
// control escapes (one escaping function, escapeText).
func PathText(p string) string { return escapeText(p, false) }

// MaxQuoted is how many bytes of an offending value a message quotes.
const MaxQuoted = 64

// ShortText is s cut to at most MaxQuoted bytes (at a character boundary)
// with the full length said, for quoting an offending value in a message: a
// field of a megabyte is named by its start, not copied into the message.
func ShortText(s string) string {
	if len(s) <= MaxQuoted {
		return s
	}
	cut := MaxQuoted
	for cut > 0 && !utf8.RuneStart(s[cut]) {
		cut--
	}
	return fmt.Sprintf("%s... (%d bytes)", s[:cut], len(s))
}
