package spec

import "fvsweep/sweep/job"

// Settings are the resolved settings of every study of s, in order, as the
// sweep record keeps them.
func (s *Spec) Settings() []job.StudySettings {
	out := make([]job.StudySettings, len(s.Studies))
	for i, st := range s.Studies {
		out[i] = job.StudySettings{Index: st.Index, Label: st.Label, Case: st.Case, Refine: st.Refine,
			Var: st.Var, Norm: st.Norm, DesignOrder: st.DesignOrder, OrderTol: st.OrderTol,
			OrderTolHi: st.OrderTolHi, Functional: st.Functional,
			Informational: st.Informational, ErrorGrowthTol: st.ErrorGrowthTol, OrderDropTol: st.OrderDropTol,
			Uncertainty: st.Uncertainty}
		if st.ExtendTo > 0 {
			out[i].ExtendTo, out[i].Grids = st.ExtendTo, gridInts(st.Grid[0].Values)
		}
	}
	return out
}

// StoredSettings are the study settings of a spec source stored before
// sweep records kept them: the source parsed (it was checked when it was
// submitted; the settings need no run resolved), nil when it does not parse
// (the tables then judge by the defaults).
func StoredSettings(file, src string) []job.StudySettings {
	if src == "" {
		return nil
	}
	sp, err := Parse(file, []byte(src))
	if err != nil {
		return nil
	}
	return sp.Settings()
}
