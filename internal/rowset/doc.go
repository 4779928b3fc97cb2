// Package rowset holds sets of rows compared by value, used to count
// distinct rows (kmeans rejects K above that count) and to keep seeders from
// returning equal centers.
package rowset
