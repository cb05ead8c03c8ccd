// Package fetchtest is a stand-in for the registry's search API for tests:
// an httptest server that serves a fixed set of study objects with the
// API's query parameters, paging and total count, and that can be told to
// fail in the ways a real server does.
package fetchtest

import (
	"encoding/base64"
	"encoding/json"
	"fmt"
	"net/http"
	"net/http/httptest"
	"regexp"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"
)

// Study is a study object with the fields the server searches.
type Study struct {
	Raw           json.RawMessage
	ID            string
	Conditions    []string
	Interventions []string
	Sponsors      []string // lead sponsor and collaborators
	Text          string   // titles and everything else query.term searches
	HasResults    bool
	LastUpdate    string // yyyy-MM-dd
}

// ParseStudy reads the searched fields from a study object.
func ParseStudy(raw []byte) (Study, error) {
	var s struct {
		ProtocolSection struct {
			IdentificationModule struct {
				NctID         string `json:"nctId"`
				BriefTitle    string `json:"briefTitle"`
				OfficialTitle string `json:"officialTitle"`
			} `json:"identificationModule"`
			StatusModule struct {
				LastUpdate struct {
					Date string `json:"date"`
				} `json:"lastUpdatePostDateStruct"`
			} `json:"statusModule"`
			Sponsors struct {
				Lead struct {
					Name string `json:"name"`
				} `json:"leadSponsor"`
				Collaborators []struct {
					Name string `json:"name"`
				} `json:"collaborators"`
			} `json:"sponsorCollaboratorsModule"`
			Conditions struct {
				Conditions []string `json:"conditions"`
				Keywords   []string `json:"keywords"`
			} `json:"conditionsModule"`
			Arms struct {
				Interventions []struct {
					Name       string   `json:"name"`
					OtherNames []string `json:"otherNames"`
				} `json:"interventions"`
			} `json:"armsInterventionsModule"`
		} `json:"protocolSection"`
		HasResults bool `json:"hasResults"`
	}
	if err := json.Unmarshal(raw, &s); err != nil {
		return Study{}, err
	}
	p := s.ProtocolSection
	st := Study{Raw: append(json.RawMessage(nil), raw...), ID: p.IdentificationModule.NctID, HasResults: s.HasResults,
		LastUpdate: p.StatusModule.LastUpdate.Date, Conditions: append(p.Conditions.Conditions, p.Conditions.Keywords...),
		Sponsors: []string{p.Sponsors.Lead.Name}}
	for _, c := range p.Sponsors.Collaborators {
		st.Sponsors = append(st.Sponsors, c.Name)
	}
	for _, iv := range p.Arms.Interventions {
		st.Interventions = append(st.Interventions, iv.Name)
		st.Interventions = append(st.Interventions, iv.OtherNames...)
	}
	st.Text = strings.Join(append([]string{st.ID, p.IdentificationModule.BriefTitle, p.IdentificationModule.OfficialTitle},
		append(st.Conditions, st.Interventions...)...), " | ")
	return st, nil
}

// Fault is what the server does instead of answering a request normally.
type Fault int

// Faults.
const (
	None         Fault = iota
	TooMany            // 429 with Retry-After (Server.RetryAfter)
	ServerError        // 500
	Truncated          // 200 with the body cut off before its declared length
	Slow               // waits Server.SlowFor before answering
	Malformed          // 200 with a body that is not a page
	BadRequest         // 400 with a message
	StallMidBody       // sends part of the body, then waits Server.SlowFor
)

// Request is one request the server received.
type Request struct {
	Query     map[string]string
	UserAgent string
	Fault     Fault
}

// Server is the fake API. Set the fields before the first request.
type Server struct {
	*httptest.Server
	Studies []Study
	// FaultFor, when set, chooses a fault for the n-th request (from 1)
	// and its page token ("" for the first page).
	FaultFor   func(n int, token string) Fault
	RetryAfter string        // the Retry-After value sent with TooMany
	SlowFor    time.Duration // how long Slow and StallMidBody wait

	mu       sync.Mutex
	requests []Request
}

// NewServer starts a server over studies; it is closed when t ends.
func NewServer(t testing.TB, studies []Study) *Server {
	s := &Server{Studies: studies, RetryAfter: "3", SlowFor: time.Second}
	s.Server = httptest.NewServer(http.HandlerFunc(s.serve))
	t.Cleanup(s.Close)
	return s
}

// Requests returns a copy of the requests received so far.
func (s *Server) Requests() []Request {
	s.mu.Lock()
	defer s.mu.Unlock()
	return append([]Request(nil), s.requests...)
}

var advancedRE = regexp.MustCompile(`^AREA\[LastUpdatePostDate\]RANGE\[(\d{4}-\d{2}-\d{2}),MAX\]$`)

// contains reports whether an item of list contains q, or, when q is an
// expression such as `"a b" OR c`, any of its alternatives (the subset of
// the API's search syntax that the tests use).
func contains(list []string, q string) bool {
	for _, alt := range strings.Split(q, " OR ") {
		alt = strings.ToLower(strings.Trim(strings.TrimSpace(alt), `"`))
		for _, x := range list {
			if alt != "" && strings.Contains(strings.ToLower(x), alt) {
				return true
			}
		}
	}
	return false
}

func (s *Server) serve(w http.ResponseWriter, r *http.Request) {
	q := map[string]string{}
	for k, v := range r.URL.Query() {
		q[k] = v[0]
	}
	token := q["pageToken"]
	s.mu.Lock()
	n := len(s.requests) + 1
	fault := None
	if s.FaultFor != nil {
		fault = s.FaultFor(n, token)
	}
	s.requests = append(s.requests, Request{Query: q, UserAgent: r.UserAgent(), Fault: fault})
	s.mu.Unlock()

	if r.URL.Path != "/api/v2/studies" || r.Method != http.MethodGet {
		http.Error(w, "not found", http.StatusNotFound)
		return
	}
	switch fault {
	case TooMany:
		w.Header().Set("Retry-After", s.RetryAfter)
		http.Error(w, "too many requests", http.StatusTooManyRequests)
		return
	case ServerError:
		http.Error(w, "internal error", http.StatusInternalServerError)
		return
	case BadRequest:
		http.Error(w, "unknown parameter", http.StatusBadRequest)
		return
	case Malformed:
		w.Header().Set("Content-Type", "application/json")
		fmt.Fprint(w, `{"studies": {"not": "a list"}}`)
		return
	case Slow:
		select {
		case <-time.After(s.SlowFor):
		case <-r.Context().Done():
			return
		}
	}
	if f := q["format"]; f != "" && f != "json" {
		http.Error(w, "format must be json", http.StatusBadRequest)
		return
	}
	var match []Study
	for _, st := range s.Studies {
		if v := q["query.cond"]; v != "" && !contains(st.Conditions, v) {
			continue
		}
		if v := q["query.intr"]; v != "" && !contains(st.Interventions, v) {
			continue
		}
		if v := q["query.spons"]; v != "" && !contains(st.Sponsors, v) {
			continue
		}
		if v := q["query.term"]; v != "" && !contains([]string{st.Text}, v) {
			continue
		}
		if v := q["filter.ids"]; v != "" && !contains(strings.FieldsFunc(v, func(r rune) bool { return r == ',' || r == '|' }), st.ID) {
			continue
		}
		if v := q["aggFilters"]; v == "results:with" && !st.HasResults {
			continue
		}
		if v := q["filter.advanced"]; v != "" {
			m := advancedRE.FindStringSubmatch(v)
			if m == nil {
				http.Error(w, "unsupported filter.advanced", http.StatusBadRequest)
				return
			}
			if st.LastUpdate < m[1] {
				continue
			}
		}
		match = append(match, st)
	}
	size := 10
	if v := q["pageSize"]; v != "" {
		var err error
		if size, err = strconv.Atoi(v); err != nil || size < 1 || size > 1000 {
			http.Error(w, "bad pageSize", http.StatusBadRequest)
			return
		}
	}
	offset := 0
	if token != "" {
		b, err := base64.RawURLEncoding.DecodeString(token)
		if err == nil {
			offset, err = strconv.Atoi(strings.TrimPrefix(string(b), "offset:"))
		}
		if err != nil || offset < 0 || offset > len(match) {
			http.Error(w, "bad pageToken", http.StatusBadRequest)
			return
		}
	}
	end := min(offset+size, len(match))
	var b strings.Builder
	b.WriteString(`{"studies":[`)
	for i, st := range match[offset:end] {
		if i > 0 {
			b.WriteByte(',')
		}
		b.Write(st.Raw)
	}
	b.WriteByte(']')
	if end < len(match) {
		fmt.Fprintf(&b, `,"nextPageToken":%q`, base64.RawURLEncoding.EncodeToString([]byte("offset:"+strconv.Itoa(end))))
	}
	if q["countTotal"] == "true" && token == "" {
		fmt.Fprintf(&b, `,"totalCount":%d`, len(match))
	}
	b.WriteByte('}')
	body := b.String()
	w.Header().Set("Content-Type", "application/json")
	switch fault {
	case Truncated:
		w.Header().Set("Content-Length", strconv.Itoa(len(body)))
		fmt.Fprint(w, body[:len(body)/2])
		return // the server closes the connection: the body is short
	case StallMidBody:
		w.Header().Set("Content-Length", strconv.Itoa(len(body)))
		fmt.Fprint(w, body[:len(body)/2])
		w.(http.Flusher).Flush()
		select {
		case <-time.After(s.SlowFor):
		case <-r.Context().Done():
			return
		}
		fmt.Fprint(w, body[len(body)/2:])
		return
	}
	fmt.Fprint(w, body)
}

// MakeStudy builds an invented study object for tests.
func MakeStudy(id, condition, intervention, sponsor string, hasResults bool, lastUpdate string) Study {
	raw := fmt.Sprintf(`{"protocolSection":{"identificationModule":{"nctId":%q,"briefTitle":"Invented trial %s"},`+
		`"statusModule":{"overallStatus":"COMPLETED","lastUpdatePostDateStruct":{"date":%q,"type":"ACTUAL"}},`+
		`"sponsorCollaboratorsModule":{"leadSponsor":{"name":%q,"class":"OTHER"}},`+
		`"conditionsModule":{"conditions":[%q]},"armsInterventionsModule":{"interventions":[{"type":"DRUG","name":%q}]}},`+
		`"hasResults":%t}`, id, id, lastUpdate, sponsor, condition, intervention, hasResults)
	st, err := ParseStudy([]byte(raw))
	if err != nil {
		panic(err)
	}
	return st
}
