package core

import "fmt"

// FieldError reports an input that cannot be used. Field is the request
// field at fault (the JSON name, such as "qb"), or empty when the request as
// a whole is at fault.
type FieldError struct {
	Field   string
	Message string
	// Limit, when not nil, is a bound the value had to respect (for example
	// the clearance ceiling of an arrangement, mL/min).
	Limit *float64
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
