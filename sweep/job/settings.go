package job

// StudySettings are the resolved settings of one [[study]] of a sweep spec
// that the results tables judge by. The sweep record keeps them from the
// submission on, so that a reader of the results never parses the spec
// again.
type StudySettings struct {
	Index       int     `json:"index"` // 1-based position of the [[study]] in the spec
	Label       string  `json:"label"` // as given, else the case name
	Case        string  `json:"case"`
	Refine      string  `json:"refine,omitempty"` // the refinement axis ("nx" or "ny"), "" if none
	Var         string  `json:"var,omitempty"`    // conserved variable judged, "" for the case's first
	Norm        string  `json:"norm"`             // l1, l2 or linf
	DesignOrder float64 `json:"design_order"`     // 0: from each group's scheme
	OrderTol    float64 `json:"order_tol"`        // accepted design - observed order
	OrderTolHi  float64 `json:"order_tol_high"`   // accepted observed - design order
	Functional  string  `json:"functional,omitempty"`
	// ExtendTo is the largest grid on the refinement axis up to which the
	// coordinator adds grids to a group whose observed order has not
	// settled (refine.extend_to); 0: none. Grids are then the spec's own
	// grids on that axis, so that a reader tells the added ones apart.
	ExtendTo int   `json:"extend_to,omitempty"`
	Grids    []int `json:"grids,omitempty"`
	// Informational studies are reported but do not fail a gate for want
	// of evidence (pre-asymptotic, insufficient data); a wrong order or a
	// failed job still fails it.
	Informational bool `json:"informational,omitempty"`
	// ErrorGrowthTol is the relative growth of an error over a gate's
	// baseline that is accepted: E_run <= E_base (1 + ErrorGrowthTol).
	// OrderDropTol is the accepted drop of an observed order below the
	// baseline's. 0 asks for results no worse than the baseline in any
	// bit; records written before these keys existed read 0.
	ErrorGrowthTol float64 `json:"error_growth_tol,omitempty"`
	OrderDropTol   float64 `json:"order_drop_tol,omitempty"`
	// Uncertainty is the estimate of a functional's discretisation error
	// that the tables report: UncertaintyCelik, UncertaintyLSQ, or "" for
	// Celik's GCI on up to three grids and the least-squares uncertainty
	// on four or more.
	Uncertainty string `json:"uncertainty,omitempty"`
}

// Values of StudySettings.Uncertainty.
const (
	UncertaintyCelik = "celik" // grid convergence index, Celik et al. 2008
	UncertaintyLSQ   = "lsq"   // least-squares uncertainty, Eça & Hoekstra 2014
)

// Defaults of StudySettings.ErrorGrowthTol and OrderDropTol: a change of
// an error by less than one part in a million, or of an order by less than
// 0.01, is not taken for a regression. fv2d gives the same bits for the
// same parameters (docs/speed.md), so 0 is usable with it; an outside
// solver whose results vary in the last bits sets its own.
const (
	DefaultErrorGrowthTol = 1e-6
	DefaultOrderDropTol   = 0.01
)
