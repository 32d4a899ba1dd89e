#!/bin/sh
# The validation index stays whole: every case in the validation executable carries the
# [validation] tag (so `hearthray_validation "[validation]"` runs them all), and every case's
# name appears in validation/README.md, where its source and tolerance are listed.
# Usage: check_index.sh <hearthray_validation> <validation/README.md>
exe=$1
readme=$2
status=0
all=$("$exe" --list-test-names-only | sed '/^$/d' | sort)
tagged=$("$exe" --list-test-names-only "[validation]" | sed '/^$/d' | sort)
if [ -n "$tagged" ]; then
  untagged=$(printf '%s\n' "$all" | grep -vxF -e "$tagged")
else
  untagged=$all
fi
if [ -n "$untagged" ]; then
  printf 'validation cases without the [validation] tag:\n%s\n' "$untagged" >&2
  status=1
fi
printf '%s\n' "$all" | while IFS= read -r name; do
  if ! grep -qF -e "$name" "$readme"; then
    echo "validation case not listed in $readme: $name" >&2
    echo missing
  fi
done | grep -q missing && status=1
if [ -z "$all" ]; then
  echo "no validation cases found in $exe" >&2
  status=1
fi
exit $status
