package report

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"fvsweep/sweep/plots"
	"fvsweep/sweep/table"
)

// Panel is a part of a study drawn as one plot: at most plots.Colours()
// groups, so that no line colour repeats within it.
type Panel struct {
	Study table.Study // the study with only the panel's groups, labels shortened
	// Holds names what the panel's groups share, "limiter=mc" or
	// "limiter=mc (part 2 of 3)"; "" when they share no parameter that
	// varies in the study (and when the study fits one plot).
	Holds string
}

// Panels splits st into plots of at most plots.Colours() groups each. A
// study that fits one plot is one panel, unchanged. Otherwise the
// parameters that vary between groups are divided in two: those kept
// within a panel and those whose values set the panels apart, so that each
// panel holds groups that share the values of the latter. A set of groups
// sharing them that is still too large is cut into parts in group order.
// Of all divisions the one with the fewest panels is taken, on a tie the
// one that cuts fewest sets (the first in mask order after that). Each
// group's label keeps only the parameters that vary within its panel.
func Panels(st table.Study) []Panel {
	limit := plots.Colours()
	if len(st.Groups) <= limit {
		return []Panel{{Study: st}}
	}
	keys := varying(st)
	var outer []string // the keys whose values set panels apart
	best, bestCut := math.MaxInt, math.MaxInt
	for mask := 0; mask < 1<<min(len(keys), 16); mask++ {
		var out []string
		for i, k := range keys {
			if mask&(1<<i) == 0 {
				out = append(out, k)
			}
		}
		n, cut := 0, 0
		for _, part := range partition(st.Groups, out) {
			n += (len(part) + limit - 1) / limit
			if len(part) > limit {
				cut++
			}
		}
		if n < best || n == best && cut < bestCut {
			best, bestCut, outer = n, cut, out
		}
	}
	var panels []Panel
	for _, part := range partition(st.Groups, outer) {
		holds := label(part[0].Params, outer)
		chunks := (len(part) + limit - 1) / limit
		for c := range chunks {
			sub := st
			sub.Groups = nil
			for _, g := range part[c*limit : min(len(part), (c+1)*limit)] {
				g.Label = shorten(g, outer)
				sub.Groups = append(sub.Groups, g)
			}
			p := Panel{Study: sub, Holds: holds}
			if chunks > 1 && holds != "" {
				p.Holds = fmt.Sprintf("%s (part %d of %d)", holds, c+1, chunks)
			}
			panels = append(panels, p)
		}
	}
	return panels
}

// varying returns the sorted parameters, other than the grid, whose values
// differ between groups of st.
func varying(st table.Study) []string {
	var keys []string
	for _, g := range st.Groups {
		for k, v := range g.Params {
			if k == "nx" || k == "ny" || k == st.Refine || slices.Contains(keys, k) {
				continue
			}
			for _, o := range st.Groups {
				if o.Params[k] != v {
					keys = append(keys, k)
					break
				}
			}
		}
	}
	slices.Sort(keys)
	return keys
}

// partition groups gs by their values of keys, in order of first
// appearance, each part in group order.
func partition(gs []table.Group, keys []string) [][]table.Group {
	var parts [][]table.Group
	index := map[string]int{}
	for _, g := range gs {
		k := label(g.Params, keys)
		i, ok := index[k]
		if !ok {
			i = len(parts)
			index[k] = i
			parts = append(parts, nil)
		}
		parts[i] = append(parts[i], g)
	}
	return parts
}

// label is "k=v ..." of params over keys.
func label(params map[string]string, keys []string) string {
	parts := make([]string, len(keys))
	for i, k := range keys {
		parts[i] = k + "=" + params[k]
	}
	return strings.Join(parts, " ")
}

// shorten is g's label without the "k=v" of the keys its panel shares; the
// whole label when nothing would be left.
func shorten(g table.Group, shared []string) string {
	var kept []string
	for _, f := range strings.Fields(g.Label) {
		k, v, ok := strings.Cut(f, "=")
		if ok && slices.Contains(shared, k) && g.Params[k] == v {
			continue
		}
		kept = append(kept, f)
	}
	if len(kept) == 0 {
		return g.Label
	}
	return strings.Join(kept, " ")
}
