package export

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
)

// WriteManifest writes m as indented JSON (two spaces, a final newline, no HTML
// escaping) to path, atomically (see WriteFileAtomic). The output is
// deterministic: struct fields keep their order and map keys are sorted, as
// encoding/json does; m should therefore hold no timestamps the caller does not
// want recorded. NaN and infinite numbers cannot be written and give an error.
func WriteManifest(path string, m any) error {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	enc.SetIndent("", "  ")
	if err := enc.Encode(m); err != nil {
		return fmt.Errorf("export: encoding the manifest for %s (replace NaN/Inf values by null or a string): %w", path, err)
	}
	return WriteFileAtomic(path, func(w io.Writer) error {
		_, err := w.Write(buf.Bytes())
		return err
	})
}
