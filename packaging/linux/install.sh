#!/bin/sh
# Puts League secretary in your applications menu (and in "Open with" for Excel workbooks).
# Run it from the unpacked folder: ./install.sh   (nothing needs root; run it again after moving the folder)
set -eu
here="$(cd "$(dirname "$0")" && pwd)"
apps="${XDG_DATA_HOME:-$HOME/.local/share}/applications"
mkdir -p "$apps"
# In a .desktop file's Exec line a quoted path escapes backslash, quote, dollar and backtick (twice: once for
# the string, once for the quoting) and doubles every %.
quoted="$(printf '%s' "$here/secretary" | sed -e 's/[\\"`$]/\\\\&/g' -e 's/%/%%/g')"
icon="$(printf '%s' "$here/secretary.png" | sed 's/[\\&|]/\\&/g')"
app="$(printf '%s' "$quoted" | sed 's/[\\&|]/\\&/g')"
sed -e "s|@APP@|$app|" -e "s|@ICON@|$icon|" "$here/secretary.desktop" > "$apps/secretary-league.desktop"
chmod 644 "$apps/secretary-league.desktop"
if command -v update-desktop-database >/dev/null 2>&1; then update-desktop-database "$apps" >/dev/null 2>&1 || true; fi
echo "League secretary is in your applications menu now (launcher: $apps/secretary-league.desktop)."
echo "To open a league workbook with it: right-click the .xlsx file, Open With, League secretary."
