module github.com/centroidlab/centroid/internal/asm/gen

go 1.26
