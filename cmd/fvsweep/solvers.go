package main

import (
	"flag"
	"fmt"

	"fvsweep/sweep/job"
	"fvsweep/sweep/manifest"
	"fvsweep/sweep/spec"
	"fvsweep/sweep/wire"
	"fvsweep/worker"
	"fvsweep/worker/external"
)

// solverFlags are the outside programs given with --solver FILE
// (repeatable): plan, run and submit check specs that name them, run and
// worker offer them (docs/own-solver.md).
type solverFlags struct {
	files []string
}

// solverDocs documents --solver for the help of the commands that take it.
var solverDocs = []flagDoc{
	{"solver", "FILE", "an outside solver program's manifest (repeatable); see docs/own-solver.md", ""},
}

func (s *solverFlags) register(fs *flag.FlagSet) {
	fs.Func("solver", "", func(v string) error { s.files = append(s.files, v); return nil })
}

// load reads and checks every manifest and returns them with their text,
// which a submission sends to the coordinator: the bytes that were
// checked, read once.
func (s *solverFlags) load() ([]*manifest.Manifest, []wire.ManifestText, error) {
	var progs []*manifest.Manifest
	var texts []wire.ManifestText
	seen := map[string]string{}
	for _, path := range s.files {
		m, src, err := spec.ReadManifest(path)
		if err != nil {
			return nil, nil, err
		}
		if other, dup := seen[m.Name]; dup {
			return nil, nil, fmt.Errorf("--solver: %s and %s both name solver %s", other, path, m.Name)
		}
		seen[m.Name] = path
		progs = append(progs, m)
		texts = append(texts, wire.ManifestText{File: path, Source: string(src)})
	}
	return progs, texts, nil
}

// runners are the runners of a worker offering fv2d and progs; a program
// that is not found or not executable here is refused.
func runners(progs []*manifest.Manifest) (map[string]worker.Runner, error) {
	out := map[string]worker.Runner{job.BuiltinSolver: worker.FV2D{}}
	for _, m := range progs {
		r, err := external.New(m)
		if err != nil {
			return nil, err
		}
		out[m.Name] = r
	}
	return out, nil
}
