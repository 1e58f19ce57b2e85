package rules

import _ "embed"

// JSONSchema is the JSON Schema (draft 2020-12) of a policy file, for
// editors to complete and check policies as they are written. It states
// the shape only: Parse checks more (shares within [0, 1], warn below
// fail, bounds in order, patterns, expressions, column types).
//
//go:embed policy.schema.json
var JSONSchema []byte
