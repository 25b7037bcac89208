#!/usr/bin/env bash
# The test command (README, .ci/run): installs what the tests need when it is
# missing, builds, type-checks and lints, then runs the whole vitest suite.
set -euo pipefail
cd "$(dirname "$0")/.."

# npm packages
if [ ! -d node_modules ] || [ ! -f node_modules/.package-lock.json ] || [ package-lock.json -nt node_modules/.package-lock.json ]; then
  npm ci
fi

# Debian packages used as outside references: numpy, OpenCV, scipy, matplotlib
# (colour-map tables) and PyYAML (the CI pipeline files) in Debian's own Python
# (/usr/bin/python3), and Chromium for the browser test of the HTML report.
need=()
/usr/bin/python3 -c 'import numpy' 2>/dev/null || need+=(python3-numpy)
/usr/bin/python3 -c 'import cv2' 2>/dev/null || need+=(python3-opencv)
/usr/bin/python3 -c 'import scipy' 2>/dev/null || need+=(python3-scipy)
/usr/bin/python3 -c 'import matplotlib' 2>/dev/null || need+=(python3-matplotlib)
/usr/bin/python3 -c 'import yaml' 2>/dev/null || need+=(python3-yaml)
[ -x /usr/bin/chromium ] || need+=(chromium)
if [ ${#need[@]} -gt 0 ]; then
  echo "installing Debian packages: ${need[*]}"
  SUDO=""; [ "$(id -u)" -ne 0 ] && SUDO="sudo"
  $SUDO apt-get update -qq
  DEBIAN_FRONTEND=noninteractive $SUDO apt-get install -y -qq "${need[@]}" >/dev/null
fi

npm run build --silent
# Types of the tests and the client script, and the lint rules (eslint.config.js).
npm run typecheck --silent
npm run lint --silent
mkdir -p test-artifacts
status=0
npx vitest run --reporter=default --reporter=json --outputFile.json=test-artifacts/vitest.json "$@" || status=$?
# A plain closing line for CI logs: "Tests: N passed, N failed".
node -e '
  const r = JSON.parse(require("fs").readFileSync("test-artifacts/vitest.json", "utf8"));
  const skipped = r.numPendingTests + r.numTodoTests;
  // A test file that fails to load runs no test: count it as a failure, not as nothing.
  const brokenFiles = r.testResults.filter((f) => f.status === "failed" && f.assertionResults.length === 0).length;
  console.log(`Tests: ${r.numPassedTests} passed, ${r.numFailedTests + brokenFiles} failed` + (skipped ? `, ${skipped} skipped` : ""));
' || true
exit $status
