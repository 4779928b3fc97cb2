package kmeans

import (
	"fmt"
	"strings"
)

// choose picks a Method when Cluster is called with a nil Method.
func choose(sp *Space, k int) Method {
	return Lloyd{}
}

// methodName returns a Method's type name without package qualifier.
func methodName(m Method) string {
	s := fmt.Sprintf("%T", m)
	s = strings.TrimPrefix(s, "*")
	if i := strings.LastIndexByte(s, '.'); i >= 0 {
		s = s[i+1:]
	}
	return s
}
