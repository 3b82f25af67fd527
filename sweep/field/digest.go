package field

import (
	"crypto/sha256"
	"encoding/base64"
	"fmt"
)

// Digest is the digest a NATS object store records for an object of data:
// "SHA-256=" and the base64url (padded) SHA-256 of its bytes.
func Digest(data []byte) string {
	sum := sha256.Sum256(data)
	return "SHA-256=" + base64.URLEncoding.EncodeToString(sum[:])
}

// CheckDigest reports an error when data does not have digest want, the
// digest recorded when its outcome was stored; an empty want (an outcome
// stored before digests were kept) checks nothing.
func CheckDigest(data []byte, want string) error {
	if want == "" {
		return nil
	}
	if got := Digest(data); got != want {
		return fmt.Errorf("the snapshot's digest %s is not the %s recorded with its result: it was replaced after the result was stored", got, want)
	}
	return nil
}
