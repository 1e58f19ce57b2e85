package report

import (
	"encoding/json"
	"io"
)

// WriteJSON writes the report as indented JSON, the documented contract.
func WriteJSON(w io.Writer, r *Report) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	return enc.Encode(r)
}
