#!/bin/sh
# man.sh rewrites docs/man, the manual pages generated from the commands;
# TestManPages fails when they are stale.
set -eu
cd "$(dirname "$0")/.."
go test ./cmd/morsel -run TestManPages -update-man
ls docs/man
