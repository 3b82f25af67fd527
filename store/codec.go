package store

// The codec of the store's own record, SweepRecord; jobs and outcomes are
// written and read with the one codec of package job.

import (
	"encoding/json"
	"fmt"
)

// maxKeyLen bounds sweep names; the bound only keeps hostile input away
// from bbolt's own key size limit (job IDs have the same bound in package
// job).
const maxKeyLen = 512

// checkKey reports whether s can be a sweep name.
func checkKey(what, s string) error {
	switch {
	case s == "":
		return fmt.Errorf("empty %s", what)
	case len(s) > maxKeyLen:
		return fmt.Errorf("%s of %d bytes is longer than %d", what, len(s), maxKeyLen)
	}
	return nil
}

// DecodeSweep decodes a stored sweep record. Bytes that are not a JSON
// object with a name give an error.
func DecodeSweep(data []byte) (SweepRecord, error) {
	var r SweepRecord
	if err := json.Unmarshal(data, &r); err != nil {
		return SweepRecord{}, fmt.Errorf("sweep record: %w", err)
	}
	if err := checkKey("name", r.Name); err != nil {
		return SweepRecord{}, fmt.Errorf("sweep record: %w", err)
	}
	if r.Jobs < 0 {
		return SweepRecord{}, fmt.Errorf("sweep record %q: negative job count", r.Name)
	}
	return r, nil
}

// arena hands out byte slices cut from large blocks, for the keys and values
// of one write transaction: bbolt keeps them until commit, and one block per
// megabyte costs the collector far less than one allocation per record.
type arena struct{ block []byte }

const arenaBlock = 1 << 20

// alloc returns n bytes that stay valid as long as the arena's blocks.
func (a *arena) alloc(n int) []byte {
	if n > cap(a.block)-len(a.block) {
		a.block = make([]byte, 0, max(arenaBlock, n))
	}
	m := len(a.block)
	a.block = a.block[:m+n]
	return a.block[m : m+n : m+n]
}
