#!/usr/bin/env sh
# A CI step for a lab repository that keeps reaction files beside manuscripts.
# Any runner that can execute a shell command can use it:
#
#   sh examples/ci/check-reactions.sh            # check the whole repository
#   sh examples/ci/check-reactions.sh notes/     # or one folder
#
# It fails the job when a reaction does not balance, when any warning is left
# (rules can be relaxed in lacuna.toml at the repository root), or when a file
# is not in the canonical layout. The SARIF report can be uploaded to a
# code-scanning service.
set -eu
target="${1:-.}"
lacuna check --deny warnings --format sarif "$target" > lacuna.sarif || status=$?
lacuna check --deny warnings --quiet "$target"
lacuna fmt --check "$target"
exit "${status:-0}"
