// Package onceflag makes a flag that takes one value refuse a second one
// while a flag set is parsed, instead of silently keeping the last value.
// The example commands parse through [Parse].
package onceflag

import (
	"flag"
	"fmt"
)

// Repeatable is implemented by flag values that may be given more than
// once (a list of files, for example); [Parse] leaves them alone.
type Repeatable interface {
	Repeatable()
}

// Parse runs parse (which parses fs) with every flag of fs that is not
// [Repeatable] wrapped so that a second value is an error. The wrappers are
// removed again before Parse returns, so that fs.PrintDefaults describes
// the flags' own types.
func Parse(fs *flag.FlagSet, parse func() error) error {
	var wrapped []*flag.Flag
	var values []flag.Value
	fs.VisitAll(func(f *flag.Flag) {
		if _, ok := f.Value.(Repeatable); ok {
			return
		}
		wrapped, values = append(wrapped, f), append(values, f.Value)
		f.Value = &once{v: f.Value}
	})
	err := parse()
	for k, f := range wrapped {
		f.Value = values[k]
	}
	return err
}

// once wraps one flag's value during parsing.
type once struct {
	v   flag.Value
	set bool
}

func (o *once) String() string {
	if o == nil || o.v == nil {
		return ""
	}
	return o.v.String()
}

func (o *once) Set(s string) error {
	if o.set {
		return fmt.Errorf("given more than once (it takes one value)")
	}
	o.set = true
	return o.v.Set(s)
}

func (o *once) IsBoolFlag() bool {
	b, ok := o.v.(interface{ IsBoolFlag() bool })
	return ok && b.IsBoolFlag()
}
