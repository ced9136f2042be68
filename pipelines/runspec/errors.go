package runspec

import "strconv"

// Error is a refused value of a spec: the key ("statistics.hm0_bin_m",
// "device[0].lookup"), the value as written and why it is refused, with
// what to do where the refusal says it. Its text is "spec: KEY = VALUE:
// WHY"; errors.As finds it under the wrappings of a run.
type Error struct {
	Key   string
	Value string
	Why   string
	Err   error // the cause, when the refusal comes from reading a named file (Why is its text)
}

func (e *Error) Error() string { return "spec: " + e.Key + " = " + e.Value + ": " + e.Why }

// Unwrap is the cause of the refusal, if any.
func (e *Error) Unwrap() error { return e.Err }

// fileErr is the refusal of the file named under key: the value is its
// path, quoted.
func fileErr(key, path string, err error) *Error {
	return &Error{Key: key, Value: strconv.Quote(path), Why: err.Error(), Err: err}
}
