package fetch

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"net/url"
	"regexp"
	"sort"
	"strings"
	"time"
)

// DefaultBaseURL is the registry's API host, the default of --base-url.
// It is the only place the host is named.
const DefaultBaseURL = "https://clinicaltrials.gov"

// StudiesPath is the search endpoint under the base URL.
const StudiesPath = "/api/v2/studies"

// MaxPageSize is the largest page the API serves.
const MaxPageSize = 1000

// Query selects the studies to fetch. Text fields use the API's search
// areas; zero fields select nothing by themselves, and a Query with no
// field set is refused (it would download the whole registry).
type Query struct {
	Condition    string   // query.cond
	Intervention string   // query.intr
	Sponsor      string   // query.spons (lead sponsor or collaborator)
	Term         string   // query.term (other terms)
	IDs          []string // filter.ids, NCT numbers
	WithResults  bool     // aggFilters=results:with
	UpdatedSince string   // yyyy-MM-dd: filter.advanced on LastUpdatePostDate
}

var nctPattern = regexp.MustCompile(`^NCT[0-9]{8}$`)

// Validate reports the first problem with q.
func (q Query) Validate() error {
	if q.Condition == "" && q.Intervention == "" && q.Sponsor == "" && q.Term == "" && len(q.IDs) == 0 && q.UpdatedSince == "" {
		return fmt.Errorf("no selection: give --condition, --intervention, --sponsor, --term, --id or --updated-since")
	}
	for _, id := range q.IDs {
		if !nctPattern.MatchString(id) {
			return fmt.Errorf("id %q is not an NCT number (NCT and 8 digits)", id)
		}
	}
	if q.UpdatedSince != "" {
		if _, err := time.Parse("2006-01-02", q.UpdatedSince); err != nil {
			return fmt.Errorf("updated-since %q is not a yyyy-MM-dd date", q.UpdatedSince)
		}
	}
	return nil
}

// Values gives the query parameters that select the studies (without
// paging, page size or format).
func (q Query) Values() url.Values {
	v := url.Values{}
	set := func(k, s string) {
		if s = strings.TrimSpace(s); s != "" {
			v.Set(k, s)
		}
	}
	set("query.cond", q.Condition)
	set("query.intr", q.Intervention)
	set("query.spons", q.Sponsor)
	set("query.term", q.Term)
	if len(q.IDs) > 0 {
		ids := append([]string(nil), q.IDs...)
		sort.Strings(ids)
		v.Set("filter.ids", strings.Join(ids, ","))
	}
	if q.WithResults {
		v.Set("aggFilters", "results:with")
	}
	if q.UpdatedSince != "" {
		v.Set("filter.advanced", "AREA[LastUpdatePostDate]RANGE["+q.UpdatedSince+",MAX]")
	}
	return v
}

// Key names the query in file names: the first 12 hex digits of the
// SHA-256 of its encoded parameters (url.Values encodes keys sorted).
func (q Query) Key() string {
	sum := sha256.Sum256([]byte(q.Values().Encode()))
	return hex.EncodeToString(sum[:6])
}
