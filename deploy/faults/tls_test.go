package faults

import (
	"crypto/ecdsa"
	"crypto/elliptic"
	"crypto/rand"
	"crypto/x509"
	"crypto/x509/pkix"
	"encoding/pem"
	"math/big"
	"net"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// writeCert signs a certificate for 127.0.0.1 (a CA when parent is nil)
// and writes cert and key as PEM into dir; it returns the paths, the
// certificate and its key.
func writeCert(t *testing.T, dir, name string, parent *x509.Certificate, parentKey *ecdsa.PrivateKey) (string, string, *x509.Certificate, *ecdsa.PrivateKey) {
	t.Helper()
	key, err := ecdsa.GenerateKey(elliptic.P256(), rand.Reader)
	if err != nil {
		t.Fatal(err)
	}
	tmpl := &x509.Certificate{
		SerialNumber: big.NewInt(time.Now().UnixNano()), Subject: pkix.Name{CommonName: name},
		NotBefore: time.Now().Add(-time.Hour), NotAfter: time.Now().Add(time.Hour),
		KeyUsage:    x509.KeyUsageDigitalSignature | x509.KeyUsageCertSign,
		ExtKeyUsage: []x509.ExtKeyUsage{x509.ExtKeyUsageServerAuth, x509.ExtKeyUsageClientAuth},
		IPAddresses: []net.IP{net.ParseIP("127.0.0.1")},
	}
	if parent == nil {
		tmpl.IsCA, tmpl.BasicConstraintsValid = true, true
		parent, parentKey = tmpl, key
	}
	der, err := x509.CreateCertificate(rand.Reader, tmpl, parent, &key.PublicKey, parentKey)
	if err != nil {
		t.Fatal(err)
	}
	cert, _ := x509.ParseCertificate(der)
	kb, err := x509.MarshalECPrivateKey(key)
	if err != nil {
		t.Fatal(err)
	}
	cp, kp := filepath.Join(dir, name+".pem"), filepath.Join(dir, name+"-key.pem")
	if err := os.WriteFile(cp, pem.EncodeToMemory(&pem.Block{Type: "CERTIFICATE", Bytes: der}), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(kp, pem.EncodeToMemory(&pem.Block{Type: "EC PRIVATE KEY", Bytes: kb}), 0o600); err != nil {
		t.Fatal(err)
	}
	return cp, kp, cert, key
}

// TestTLSClients: the embedded server serves TLS with --tls-cert and
// --tls-key; a worker that trusts the CA (--tls-ca) connects and runs the
// sweep, one that does not is refused with the certificate error.
func TestTLSClients(t *testing.T) {
	r := newRig(t)
	ca, _, caCert, caKey := writeCert(t, r.dir, "ca", nil, nil)
	cert, key, _, _ := writeCert(t, r.dir, "server", caCert, caKey)
	spec, name, ids := r.writeSpec(bigAndSmall)
	coord, url := r.serve(freePort(t), "--tls-cert", cert, "--tls-key", key)
	url = strings.Replace(url, "nats://", "tls://", 1)
	out, errs, code := r.cli("worker", "--nats", url)
	if code == 0 || !strings.Contains(errs, "certificate") {
		t.Fatalf("worker without --tls-ca: exit %d, want a certificate error:\n%s%s", code, out, errs)
	}
	r.env = []string{"FVSWEEP_TLS_CA=" + ca}
	r.worker("worker-a", url, 2)
	r.submit(spec, url)
	r.waitDone(name, url, len(ids), 60*time.Second)
	coord.stop(20 * time.Second)
	f, _ := r.count(name, ids, coord, nil)
	wantClean(t, f)
}
