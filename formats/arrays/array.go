package arrays

import "fmt"

// Array is one named n-dimensional array in row-major (C) order. Exactly
// one of Float, Int and Text holds its elements.
type Array struct {
	// Name is the variable name: a letter, then letters, digits or '_'
	// (a valid MATLAB identifier of at most 63 characters).
	Name string
	// Shape lists the dimensions, outermost first; empty for a scalar.
	Shape []int
	Float []float64
	Int   []int32
	// Text holds one string per element (a scalar string is Shape empty,
	// one element).
	Text []string
}

// size returns the number of elements the shape implies.
func (a *Array) size() int {
	n := 1
	for _, d := range a.Shape {
		n *= d
	}
	return n
}

// check panics when the array is malformed: a programming error of the
// caller, not a runtime condition.
func (a *Array) check() {
	set := 0
	got := 0
	if a.Float != nil {
		set, got = set+1, len(a.Float)
	}
	if a.Int != nil {
		set, got = set+1, len(a.Int)
	}
	if a.Text != nil {
		set, got = set+1, len(a.Text)
	}
	if set > 1 || got != a.size() || !validName(a.Name) {
		panic(fmt.Sprintf("arrays: malformed array %q: shape %v, %d elements", a.Name, a.Shape, got))
	}
}

func validName(s string) bool {
	if s == "" || len(s) > 63 {
		return false
	}
	for i, r := range s {
		letter := (r >= 'a' && r <= 'z') || (r >= 'A' && r <= 'Z')
		if !letter && (i == 0 || !(r == '_' || (r >= '0' && r <= '9'))) {
			return false
		}
	}
	return true
}

// Floats returns a float64 array.
func Floats(name string, v []float64, shape ...int) Array {
	if v == nil {
		v = []float64{}
	}
	return Array{Name: name, Shape: shape, Float: v}
}

// Ints returns an int32 array.
func Ints(name string, v []int32, shape ...int) Array {
	if v == nil {
		v = []int32{}
	}
	return Array{Name: name, Shape: shape, Int: v}
}

// Texts returns a one-dimensional array of strings.
func Texts(name string, v []string) Array {
	if v == nil {
		v = []string{}
	}
	return Array{Name: name, Shape: []int{len(v)}, Text: v}
}

// Scalar returns a scalar string.
func Scalar(name, s string) Array { return Array{Name: name, Text: []string{s}} }
