package table

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"maps"
	"slices"
	"strconv"

	"fvsweep/sweep/job"
	"fvsweep/sweep/wire"
)

// ExportFormats are the names WriteExport accepts.
var ExportFormats = []string{"csv", "json"}

// exportRow is one job in the JSON export.
type exportRow struct {
	JobID       string               `json:"job_id"`
	Study       int                  `json:"study"`
	Case        string               `json:"case"`
	Params      map[string]string    `json:"params"`
	Status      job.Status           `json:"status"`
	Attempts    int                  `json:"attempts"`
	Worker      string               `json:"worker"`
	WallS       float64              `json:"wall_s"`
	Steps       int                  `json:"steps"`
	TFinal      float64              `json:"t_final"`
	Errors      map[string]job.Norms `json:"errors"`
	Functionals map[string]float64   `json:"functionals,omitempty"`
	Snapshot    string               `json:"snapshot,omitempty"`
	Error       string               `json:"error"`
}

// WriteExport writes every job of rows with its state and outcome, flat:
// json, an array of one object per job; csv, one line per job with fixed
// columns, then every parameter and every variable's norms (VAR_l1, ...)
// that any job has, in sorted order.
func WriteExport(w io.Writer, format string, rows []wire.Row) error {
	out := make([]exportRow, len(rows))
	for i, r := range rows {
		e := exportRow{JobID: r.Job.ID, Study: r.Job.Study, Case: r.Job.Case, Params: r.Job.Params,
			Status: r.Status, Worker: r.Worker, Errors: map[string]job.Norms{}}
		if o := r.Outcome; o != nil {
			e.Attempts, e.WallS, e.Steps, e.TFinal, e.Error = o.Attempts, o.WallS, o.Steps, o.TFinal, o.Error
			e.Functionals, e.Snapshot = o.Functionals, o.Snapshot
			if o.Errors != nil {
				e.Errors = o.Errors
			}
		}
		out[i] = e
	}
	switch format {
	case "json":
		enc := json.NewEncoder(w)
		enc.SetIndent("", "  ")
		return enc.Encode(out)
	case "csv":
		return writeExportCSV(w, out)
	}
	return fmt.Errorf("format %q: want csv or json", format)
}

func writeExportCSV(w io.Writer, rows []exportRow) error {
	params, vars := map[string]bool{}, map[string]bool{}
	for _, r := range rows {
		for k := range r.Params {
			params[k] = true
		}
		for v := range r.Errors {
			vars[v] = true
		}
	}
	pk, vk := slices.Sorted(maps.Keys(params)), slices.Sorted(maps.Keys(vars))
	head := []string{"job_id", "study", "case", "status", "attempts", "worker", "wall_s", "steps", "t_final", "error"}
	head = append(head, pk...)
	for _, v := range vk {
		head = append(head, v+"_l1", v+"_l2", v+"_linf")
	}
	cw := csv.NewWriter(w)
	cw.Write(head)
	g := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	for _, r := range rows {
		rec := []string{r.JobID, strconv.Itoa(r.Study), r.Case, string(r.Status), strconv.Itoa(r.Attempts), r.Worker,
			g(r.WallS), strconv.Itoa(r.Steps), g(r.TFinal), r.Error}
		for _, k := range pk {
			rec = append(rec, r.Params[k])
		}
		for _, v := range vk {
			if n, ok := r.Errors[v]; ok {
				rec = append(rec, g(n.L1), g(n.L2), g(n.Linf))
			} else {
				rec = append(rec, "", "", "")
			}
		}
		cw.Write(rec)
	}
	cw.Flush()
	return cw.Error()
}
