package dockertest

import (
	"bufio"
	"bytes"
	"encoding/json"
	"strings"
)

// StoreWrites sums the outcome records a coordinator's log says it wrote
// to the store: the "written" counts of its "stored results" lines and one
// per "job failed: delivery limit reached" line. The coordinator must log
// at debug level in JSON (serve --log-level debug --log-json); other lines
// are skipped. A job stored exactly once adds exactly one.
func StoreWrites(log string) int {
	n := 0
	sc := bufio.NewScanner(strings.NewReader(log))
	sc.Buffer(make([]byte, 1<<20), 1<<20)
	for sc.Scan() {
		line := sc.Bytes()
		if !bytes.HasPrefix(line, []byte("{")) {
			continue
		}
		var rec struct {
			Msg     string `json:"@message"`
			Written int    `json:"written"`
		}
		if json.Unmarshal(line, &rec) != nil {
			continue
		}
		switch rec.Msg {
		case "stored results":
			n += rec.Written
		case "job failed: delivery limit reached":
			n++
		}
	}
	return n
}
