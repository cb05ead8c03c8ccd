package compare

import (
	"regexp"
	"strings"
)

// studyWord matches "study" and "studies" as words.
var studyWord = regexp.MustCompile(`\b([Ss])tud(y|ies)\b`)

// reviewsNotStudies rewords the pooling engine's warnings for a pool whose
// units are reviews: "Only 3 studies" becomes "Only 3 reviews".
func reviewsNotStudies(ws []string) []string {
	out := make([]string, len(ws))
	for i, w := range ws {
		out[i] = studyWord.ReplaceAllStringFunc(w, func(m string) string {
			r := "review"
			if strings.HasSuffix(m, "ies") {
				r = "reviews"
			}
			if m[0] == 'S' {
				r = "R" + r[1:]
			}
			return r
		})
	}
	return out
}
