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
}
