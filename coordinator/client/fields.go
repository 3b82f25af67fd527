package client

import (
	"context"
	"errors"
	"fmt"
	"strings"

	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"
)

// FetchField reads the field snapshot ref from the JetStream object store
// on nc; ref is what a done outcome holds in Snapshot, "BUCKET/OBJECT"
// (the bucket wire.Names.FieldBucket, the object the job ID). The bytes
// are the snapshot encoding of field.Encode.
func FetchField(ctx context.Context, nc *nats.Conn, ref string) ([]byte, error) {
	bucket, obj, ok := strings.Cut(ref, "/")
	if !ok || bucket == "" || obj == "" || strings.ContainsAny(bucket, ".*> ") {
		return nil, fmt.Errorf("snapshot reference %q: want BUCKET/OBJECT", ref)
	}
	js, err := jetstream.New(nc)
	if err != nil {
		return nil, fmt.Errorf("snapshot %s: %w", ref, err)
	}
	store, err := js.ObjectStore(ctx, bucket)
	if err != nil {
		return nil, fmt.Errorf("snapshot %s: object store %s: %w", ref, bucket, err)
	}
	b, err := store.GetBytes(ctx, obj)
	if errors.Is(err, jetstream.ErrObjectNotFound) {
		return nil, fmt.Errorf("snapshot %s: not in object store %s (deleted, or stored on another server)", ref, bucket)
	}
	if err != nil {
		return nil, fmt.Errorf("snapshot %s: %w", ref, err)
	}
	return b, nil
}

// Field reads the field snapshot ref through the client's connection (see
// FetchField).
func (c *Client) Field(ctx context.Context, ref string) ([]byte, error) {
	ctx, cancel := context.WithTimeout(ctx, c.Timeout)
	defer cancel()
	return FetchField(ctx, c.nc, ref)
}
