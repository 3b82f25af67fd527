package worker

import (
	"context"
	"errors"
	"fmt"

	"fvsweep/fv2d"
	"fvsweep/sweep"
)

// Solve is the default Runner: it resolves the job's parameters, checks
// that they give the job's ID, and runs the case with fv2d. A run that
// breaks down (*fv2d.Failure) is a failed outcome with the failure as its
// reason; parameters the case refuses are a Permanent error.
func Solve(ctx context.Context, job sweep.Job) (sweep.Outcome, *fv2d.State, error) {
	v, err := fv2d.Resolve(job.Case, job.Params)
	if err != nil {
		return sweep.Outcome{}, nil, Permanent(err)
	}
	if id := sweep.JobID(v); id != job.ID {
		return sweep.Outcome{}, nil, Permanent(fmt.Errorf("job %s: its parameters give ID %s", job.ID, id))
	}
	res, err := fv2d.Run(ctx, v)
	var f *fv2d.Failure
	if errors.As(err, &f) {
		return sweep.Outcome{Status: sweep.StatusFailed, Error: f.Error(), Steps: f.Step, TFinal: f.T}, nil, nil
	}
	if err != nil {
		if ctx.Err() != nil {
			return sweep.Outcome{}, nil, err
		}
		return sweep.Outcome{}, nil, Permanent(err)
	}
	return sweep.Outcome{
		Status: sweep.StatusDone, WallS: res.WallS, Steps: res.Steps, TFinal: res.TFinal,
		CellUpdatesPerS: res.CellUpdatesPerS, Errors: res.Errors, Functionals: res.Functionals, Totals: res.Totals,
	}, res.Final, nil
}

// Field returns the interior of s as float32, one slice per conserved
// variable, x fastest: the body of a field snapshot.
func Field(s *fv2d.State) [][]float32 {
	out := make([][]float32, len(s.U))
	for k, u := range s.U {
		d := make([]float32, s.NX*s.NY)
		for j := 0; j < s.NY; j++ {
			row := u[s.Index(0, j) : s.Index(0, j)+s.NX]
			dst := d[j*s.NX : (j+1)*s.NX]
			for i, x := range row {
				dst[i] = float32(x)
			}
		}
		out[k] = d
	}
	return out
}

// putSnapshot writes the final field of job to the field store and returns
// the object's reference, "bucket/jobID".
func (w *Worker) putSnapshot(ctx context.Context, job sweep.Job, s *fv2d.State) (string, error) {
	h := sweep.FieldHeader{JobID: job.ID, Vars: s.Eq.Vars(), NX: s.NX, NY: s.NY,
		X0: s.X0, Y0: s.Y0, DX: s.DX, DY: s.DY, T: s.T}
	data, err := sweep.EncodeField(h, Field(s))
	if err != nil {
		return "", err
	}
	if _, err := w.fields.PutBytes(ctx, job.ID, data); err != nil {
		return "", fmt.Errorf("snapshot of %s: %w", job.ID, err)
	}
	return w.cfg.Names.FieldBucket() + "/" + job.ID, nil
}
