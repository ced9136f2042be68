package ingest

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io"
	"io/fs"
	"os"
	"strings"
	"syscall"
)

// fileStamp is what the file system says of a file: a file whose stamp is
// unchanged holds the same bytes (any write changes the ctime, which no user
// can set back; a replacement changes the inode).
type fileStamp struct {
	Size          int64
	MTime, CTime  int64 // ns
	Inode, Device uint64
	known         bool
}

func stampOf(st fs.FileInfo) fileStamp {
	s := fileStamp{Size: st.Size(), MTime: st.ModTime().UnixNano(), known: true}
	if sys, ok := st.Sys().(*syscall.Stat_t); ok {
		s.CTime = sys.Ctim.Sec*1e9 + sys.Ctim.Nsec
		s.Inode, s.Device = sys.Ino, uint64(sys.Dev)
	}
	return s
}

// differs says how b differs from a ("" when it does not).
func (a fileStamp) differs(b fileStamp) string {
	var d []string
	if a.Size != b.Size {
		d = append(d, fmt.Sprintf("size %d bytes, %d when the catalog was built", b.Size, a.Size))
	}
	if a.MTime != b.MTime {
		d = append(d, "modification time")
	}
	if a.CTime != b.CTime {
		d = append(d, "status change time")
	}
	if a.Inode != b.Inode || a.Device != b.Device {
		d = append(d, "inode (the file was replaced)")
	}
	return strings.Join(d, ", ")
}

// Unchanged checks that input file i is the file the catalog was built from
// (same size, modification and status change times, inode and device).
func (c *Catalog) Unchanged(i int) error {
	fe := &c.Files[i]
	if !fe.stamp.known {
		return nil
	}
	st, err := os.Stat(fe.Path)
	if err != nil {
		return errf(fe.Path, "", "the input file was removed during the run (%v); restore it and rerun the same command to resume", err)
	}
	if why := fe.stamp.differs(stampOf(st)); why != "" {
		return errf(fe.Path, "", "the input file changed during the run (%s); its results would mix old and new bytes, so the run stops: rerun the same command (a resume refuses files whose content changed; then use --restart)", why)
	}
	return nil
}

// HashFile is the hex SHA-256 of input file i, of the bytes the run reads:
// the file's stamp must equal the catalog's before and after hashing, so the
// hashed bytes are the bytes NetCDF reads (the reader checks the same stamp
// around its reads). It gives up with ctx's error when ctx ends.
func (c *Catalog) HashFile(ctx context.Context, i int) (string, error) {
	fe := &c.Files[i]
	if err := c.Unchanged(i); err != nil {
		return "", err
	}
	f, err := os.Open(fe.Path)
	if err != nil {
		return "", fmt.Errorf("ingest: checksum of %s: %w", fe.Path, err)
	}
	defer f.Close()
	if st, err := f.Stat(); err != nil {
		return "", fmt.Errorf("ingest: checksum of %s: %w", fe.Path, err)
	} else if why := fe.stamp.differs(stampOf(st)); fe.stamp.known && why != "" {
		return "", errf(fe.Path, "", "the input file changed during the run (%s); rerun the same command", why)
	}
	h := sha256.New()
	buf := make([]byte, 1<<20)
	for {
		if err := ctx.Err(); err != nil {
			return "", err
		}
		n, err := f.Read(buf)
		h.Write(buf[:n])
		if err == io.EOF {
			break
		}
		if err != nil {
			return "", fmt.Errorf("ingest: checksum of %s: %w", fe.Path, err)
		}
	}
	if err := c.Unchanged(i); err != nil {
		return "", err
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// globEscape makes a path match itself literally as a filepath.Glob pattern
// (a directory named "brackets[2001]" is a name, not a character class).
func globEscape(p string) string {
	var b strings.Builder
	for _, r := range p {
		if strings.ContainsRune(`*?[\`, r) {
			b.WriteByte('\\')
		}
		b.WriteRune(r)
	}
	return b.String()
}
