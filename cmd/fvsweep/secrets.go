package main

// Secrets: tokens are read from files or the environment. A token given as
// a flag value works, with a warning, since any user of the machine sees
// it in ps.

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"strings"
	"sync"
)

// secret is one credential of a command: --NAME VALUE, --NAME-file FILE,
// and the environment variables ENV and ENV_FILE.
type secret struct {
	dst       *string
	name, env string
	value     string // --NAME
	file      string // --NAME-file
	given     bool   // --NAME was on the command line
}

var (
	secretsMu sync.Mutex
	secretsOf = map[*flag.FlagSet][]*secret{}
	// secretWarnings receives the warnings about secrets on the command
	// line (stderr; tests replace it).
	secretWarnings io.Writer = os.Stderr
)

// registerSecret adds --name and --name-file to fs; after parsing,
// resolveSecrets sets *dst from them or from the environment.
func registerSecret(fs *flag.FlagSet, dst *string, name, env string) {
	s := &secret{dst: dst, name: name, env: env}
	fs.Func(name, "", func(v string) error { s.value, s.given = v, true; return nil })
	fs.Func(name+"-file", "", func(v string) error { s.file = v; return nil })
	secretsMu.Lock()
	secretsOf[fs] = append(secretsOf[fs], s)
	secretsMu.Unlock()
}

// resolveSecrets sets every secret registered on fs, in this order of
// precedence: --NAME-file, --NAME (with a warning), $ENV_FILE, $ENV.
func resolveSecrets(fs *flag.FlagSet) error {
	secretsMu.Lock()
	list := secretsOf[fs]
	secretsMu.Unlock()
	for _, s := range list {
		v, err := s.resolve()
		if err != nil {
			return err
		}
		*s.dst = v
	}
	return nil
}

func (s *secret) resolve() (string, error) {
	switch {
	case s.given && s.file != "":
		return "", fmt.Errorf("give --%s or --%s-file, not both", s.name, s.name)
	case s.file != "":
		return readSecret("--"+s.name+"-file", s.file)
	case s.given:
		fmt.Fprintf(secretWarnings, "fvsweep: warning: --%s on the command line can be read by every user of this machine (ps); use --%s-file FILE or $%s\n",
			s.name, s.name, s.env)
		return s.value, nil
	case os.Getenv(s.env+"_FILE") != "":
		return readSecret("$"+s.env+"_FILE", os.Getenv(s.env+"_FILE"))
	}
	return os.Getenv(s.env), nil
}

// readSecret reads a secret from file: its first line, without blanks.
func readSecret(what, file string) (string, error) {
	b, err := os.ReadFile(file)
	if err != nil {
		return "", fmt.Errorf("%s: %w", what, err)
	}
	line, _, _ := strings.Cut(string(b), "\n")
	v := strings.TrimSpace(line)
	if v == "" {
		return "", fmt.Errorf("%s %s: %w", what, file, errEmptySecret)
	}
	return v, nil
}

var errEmptySecret = errors.New("the file holds no secret on its first line")
