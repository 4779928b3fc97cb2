package main

import (
	"context"
	"errors"
)

func scoreVerb(ctx context.Context, args []string, e *env) error {
	return errors.New("score: not yet")
}
