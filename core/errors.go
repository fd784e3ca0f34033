package core

import "fmt"

// FieldError reports an input that cannot be used. Field is the request
// field at fault (the JSON name, such as "qb"), or empty when the request as
// a whole is at fault.
//
// The json tags give it the shape of an API error body, so that a result
// can carry a failed part (see FlowAnswer).
type FieldError struct {
	Field   string `json:"field"`
	Message string `json:"message"`
	// Limit, when not nil, is a bound the value had to respect (for example
	// the clearance ceiling of an arrangement, mL/min).
	Limit *float64 `json:"limit,omitempty"`
}

func (e *FieldError) Error() string {
	if e.Field == "" {
		return e.Message
	}
	return e.Field + ": " + e.Message
}

// fieldErrorf builds a *FieldError for field with a formatted message.
func fieldErrorf(field, format string, args ...any) *FieldError {
	return &FieldError{Field: field, Message: fmt.Sprintf(format, args...)}
}
