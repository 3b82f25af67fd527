package deploy

import (
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
)

// Node is where one node of a test cluster listens and keeps its files.
type Node struct {
	Host        string // address the node listens on and its peers dial
	ClientPort  int
	ClusterPort int
	StoreDir    string
}

// NATSDir is the directory of the node configurations in this checkout.
func NATSDir() string {
	_, file, _, _ := runtime.Caller(0)
	return filepath.Join(filepath.Dir(file), "nats")
}

// The literal settings of deploy/nats that a test cluster replaces.
const (
	clientListen  = "listen: 0.0.0.0:4222"
	clusterListen = "listen: 0.0.0.0:6222"
	storeDir      = `store_dir: "/var/lib/fvsweep-nats"`
)

func routeURL(i int) string { return fmt.Sprintf("nats-route://fvsweep-nats-%d:6222", i) }

// WriteNodeConfigs writes the configurations of deploy/nats (the files in
// src) for the three nodes into dst/node-I/ (node.conf and common.conf),
// with only the addresses, ports and store directories changed to those of
// nodes, and returns the paths of the three node.conf files. Everything
// else, the users, rights, JetStream and cluster settings, is the deployed
// text. A setting that is not found exactly where expected is an error, so
// that an edit of deploy/nats cannot silently escape the tests.
func WriteNodeConfigs(src, dst string, nodes [3]Node) ([3]string, error) {
	var paths [3]string
	common, err := os.ReadFile(filepath.Join(src, "common.conf"))
	if err != nil {
		return paths, err
	}
	for i, n := range nodes {
		b, err := os.ReadFile(filepath.Join(src, fmt.Sprintf("node-%d.conf", i+1)))
		if err != nil {
			return paths, err
		}
		conf := string(b)
		subs := []struct{ old, new string }{
			{clientListen, "listen: " + hostPort(n.Host, n.ClientPort)},
			{clusterListen, "listen: " + hostPort(n.Host, n.ClusterPort)},
		}
		for j, peer := range nodes {
			if j != i {
				subs = append(subs, struct{ old, new string }{routeURL(j + 1), "nats-route://" + hostPort(peer.Host, peer.ClusterPort)})
			}
		}
		if conf, err = replaceOnce(fmt.Sprintf("node-%d.conf", i+1), conf, subs...); err != nil {
			return paths, err
		}
		com, err := replaceOnce("common.conf", string(common), struct{ old, new string }{storeDir, "store_dir: " + strconv.Quote(n.StoreDir)})
		if err != nil {
			return paths, err
		}
		dir := filepath.Join(dst, fmt.Sprintf("node-%d", i+1))
		if err := os.MkdirAll(dir, 0o755); err != nil {
			return paths, err
		}
		paths[i] = filepath.Join(dir, "node.conf")
		if err := os.WriteFile(paths[i], []byte(conf), 0o644); err != nil {
			return paths, err
		}
		if err := os.WriteFile(filepath.Join(dir, "common.conf"), []byte(com), 0o644); err != nil {
			return paths, err
		}
	}
	return paths, nil
}

func hostPort(h string, p int) string {
	if strings.Contains(h, ":") {
		h = "[" + h + "]"
	}
	return h + ":" + strconv.Itoa(p)
}

func replaceOnce(file, s string, subs ...struct{ old, new string }) (string, error) {
	for _, r := range subs {
		if n := strings.Count(s, r.old); n != 1 {
			return "", fmt.Errorf("deploy/nats/%s: %q occurs %d times, want once", file, r.old, n)
		}
		s = strings.Replace(s, r.old, r.new, 1)
	}
	return s, nil
}
