package export

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"swellgrid/export/contract"
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

// WriteRunManifest writes the manifest m of the run directory dir
// (WriteManifest) and then its seal (SealManifest).
func WriteRunManifest(dir string, m any) error {
	if err := WriteManifest(filepath.Join(dir, contract.ManifestFile), m); err != nil {
		return err
	}
	return SealManifest(dir)
}

// SealManifest writes the SHA-256 of dir/manifest.json to the run's sealed
// state (contract.ManifestSeal, in .swellgrid/): rundir verifies the
// manifest against it before reading a finished run, so that a changed
// digit in manifest.json is refused rather than used.
func SealManifest(dir string) error {
	return SealFiles(dir, contract.ManifestSeal, contract.ManifestFile)
}

// SealFiles writes the SHA-256 of each of the files (relative to dir,
// slash-separated) to the seal sealRel (a file in dir's .swellgrid/ folder),
// one line each as sha256sum writes them ("<hex>  <name>"), atomically:
// rundir.ProveSealed checks the files against it before they are read
// (the manifest, a shard's shard.json, a validation written outside a run).
func SealFiles(dir, sealRel string, files ...string) error {
	var b bytes.Buffer
	for _, f := range files {
		h, err := SHA256File(filepath.Join(dir, filepath.FromSlash(f)))
		if err != nil {
			return err
		}
		fmt.Fprintf(&b, "%s  %s\n", h, f)
	}
	if _, err := MakeDir(dir, filepath.Dir(filepath.FromSlash(sealRel))); err != nil {
		return err
	}
	return WriteFileAtomic(filepath.Join(dir, filepath.FromSlash(sealRel)), func(w io.Writer) error {
		_, err := w.Write(b.Bytes())
		return err
	})
}

// SetJSONMember sets the member path of the JSON object doc to v, keeping the
// order of the other members (a new member goes last).
func SetJSONMember(doc []byte, path []string, v any) ([]byte, error) {
	dec := json.NewDecoder(bytes.NewReader(doc))
	dec.UseNumber()
	if t, err := dec.Token(); err != nil || t != json.Delim('{') {
		return nil, fmt.Errorf("not a JSON object")
	}
	var b bytes.Buffer
	b.WriteByte('{')
	found := false
	n := 0
	for dec.More() {
		t, err := dec.Token()
		if err != nil {
			return nil, err
		}
		k := t.(string)
		var val json.RawMessage
		if err := dec.Decode(&val); err != nil {
			return nil, err
		}
		if k == path[0] {
			found = true
			if len(path) > 1 {
				if val, err = SetJSONMember(val, path[1:], v); err != nil {
					return nil, fmt.Errorf("%s: %w", k, err)
				}
			} else if val, err = marshalPlain(v); err != nil {
				return nil, err
			}
		}
		if n > 0 {
			b.WriteByte(',')
		}
		n++
		kb, _ := json.Marshal(k)
		b.Write(kb)
		b.WriteByte(':')
		b.Write(val)
	}
	if !found {
		var val []byte
		var err error
		if len(path) > 1 {
			val, err = SetJSONMember([]byte("{}"), path[1:], v)
		} else {
			val, err = marshalPlain(v)
		}
		if err != nil {
			return nil, err
		}
		if n > 0 {
			b.WriteByte(',')
		}
		kb, _ := json.Marshal(path[0])
		b.Write(kb)
		b.WriteByte(':')
		b.Write(val)
	}
	b.WriteByte('}')
	return b.Bytes(), nil
}

// marshalPlain is json.Marshal without HTML escaping (">=" stays ">=").
func marshalPlain(v any) ([]byte, error) {
	var b bytes.Buffer
	enc := json.NewEncoder(&b)
	enc.SetEscapeHTML(false)
	if err := enc.Encode(v); err != nil {
		return nil, err
	}
	return bytes.TrimRight(b.Bytes(), "\n"), nil
}

// OutputChecksums is the size and SHA-256 of each of the files outputs
// (relative to dir, slash-separated), in their order, for the manifest's
// output_checksums; manifest.json itself is left out (a file cannot hold
// its own checksum). A listed file that is missing is an error.
func OutputChecksums(dir string, outputs []string) ([]contract.FileSum, error) {
	var sums []contract.FileSum
	for _, o := range outputs {
		if o == contract.ManifestFile {
			continue
		}
		p := filepath.Join(dir, filepath.FromSlash(o))
		st, err := os.Lstat(p)
		if err != nil {
			return nil, fmt.Errorf("export: checksum of the output %s: %w", p, err)
		}
		if !st.Mode().IsRegular() {
			return nil, &LinkError{Path: p, What: kindOf(st.Mode())}
		}
		h, err := SHA256File(p)
		if err != nil {
			return nil, err
		}
		sums = append(sums, contract.FileSum{Path: o, Size: st.Size(), SHA256: h})
	}
	return sums, nil
}

// Reseal recomputes the output_checksums of dir/manifest.json over its
// outputs list and the contract.SealedExtras present (validation's files)
// after a command rewrote files of a finished run (report, screen,
// validate), keeping every other byte of the manifest's content, and seals
// the manifest again (SealManifest). It must run under the run's lock. A
// manifest without output_checksums (a run of an earlier version) is left
// as it is: resealing it would vouch for files nobody checked.
func Reseal(dir string) error {
	path := filepath.Join(dir, contract.ManifestFile)
	raw, err := os.ReadFile(path)
	if err != nil {
		return fmt.Errorf("export: %w", err)
	}
	var m struct {
		Outputs []string           `json:"outputs"`
		Sums    []contract.FileSum `json:"output_checksums"`
	}
	if err := json.Unmarshal(raw, &m); err != nil {
		return fmt.Errorf("export: %s: %w", path, err)
	}
	if m.Sums == nil {
		return nil
	}
	files := append([]string{}, m.Outputs...)
	for _, x := range contract.SealedExtras {
		if st, err := os.Lstat(filepath.Join(dir, x)); err == nil && st.Mode().IsRegular() && !slices.Contains(files, x) {
			files = append(files, x)
		}
	}
	sums, err := OutputChecksums(dir, files)
	if err != nil {
		return err
	}
	doc, err := SetJSONMember(raw, []string{contract.ManifestChecksumsKey}, sums)
	if err != nil {
		return fmt.Errorf("export: %s: %w", path, err)
	}
	return WriteRunManifest(dir, json.RawMessage(doc))
}
