package worker

import (
	"context"
	"errors"
	"fmt"

	"fvsweep/fv2d"
	"fvsweep/sweep/field"
	"fvsweep/sweep/job"
)

// Solve is the default Runner: it resolves the job's parameters, checks
// that they give the job's ID, and runs the case with fv2d. A run that
// breaks down (*fv2d.Failure) is a failed outcome with the failure as its
// reason; parameters the case refuses are a Permanent error.
func Solve(ctx context.Context, jb job.Job) (job.Outcome, *fv2d.State, error) {
	v, err := fv2d.Resolve(jb.Case, jb.Params)
	if err != nil {
		return job.Outcome{}, nil, Permanent(err)
	}
	if id := job.NewID(v.String()); id != jb.ID {
		return job.Outcome{}, nil, Permanent(fmt.Errorf("job %s: its parameters give ID %s", jb.ID, id))
	}
	res, err := fv2d.Run(ctx, v)
	var f *fv2d.Failure
	if errors.As(err, &f) {
		return job.Outcome{Status: job.StatusFailed, Error: f.Error(), Steps: f.Step, TFinal: f.T}, nil, nil
	}
	if err != nil {
		if ctx.Err() != nil {
			return job.Outcome{}, nil, err
		}
		return job.Outcome{}, nil, Permanent(err)
	}
	return job.Outcome{
		Status: job.StatusDone, WallS: res.WallS, Steps: res.Steps, TFinal: res.TFinal,
		CellUpdatesPerS: res.CellUpdatesPerS, Errors: outcomeNorms(res.Errors), Functionals: res.Functionals, Totals: outcomeTotals(res.Totals),
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
func (w *Worker) putSnapshot(ctx context.Context, jb job.Job, s *fv2d.State) (string, error) {
	h := field.Header{JobID: jb.ID, Vars: s.Eq.Vars(), NX: s.NX, NY: s.NY,
		X0: s.X0, Y0: s.Y0, DX: s.DX, DY: s.DY, T: s.T}
	data, err := field.Encode(h, Field(s))
	if err != nil {
		return "", err
	}
	if _, err := w.fields.PutBytes(ctx, jb.ID, data); err != nil {
		return "", fmt.Errorf("snapshot of %s: %w", jb.ID, err)
	}
	return w.cfg.Names.FieldBucket() + "/" + jb.ID, nil
}

// outcomeNorms copies a run's error norms into the outcome's type.
func outcomeNorms(m map[string]fv2d.Norms) map[string]job.Norms {
	if m == nil {
		return nil
	}
	out := make(map[string]job.Norms, len(m))
	for k, n := range m {
		out[k] = job.Norms(n)
	}
	return out
}

// outcomeTotals copies a run's conserved totals into the outcome's type.
func outcomeTotals(m map[string]fv2d.Total) map[string]job.Total {
	if m == nil {
		return nil
	}
	out := make(map[string]job.Total, len(m))
	for k, t := range m {
		out[k] = job.Total(t)
	}
	return out
}
