#!/usr/bin/env bash
# Restores a backup made by scripts/backup.sh:
#   scripts/restore.sh FOLDER
# into the database named by DATABASE_URL, which must be fresh and empty (create it
# first, e.g. scripts/db.sh recreate NAME), and the bucket named by the S3_*
# variables (created when missing). The object files are checked against their
# recorded SHA-256 before any is written; the database restore runs in one
# transaction, so a failure leaves the database as it was.
source "$(dirname "${BASH_SOURCE[0]}")/lib/common.sh"
cd "$ROOT"
command -v pg_restore >/dev/null || die "pg_restore is missing (Debian package postgresql-client)"
FOLDER="${1:?usage: scripts/restore.sh FOLDER}"
AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED=true npx --no-install tsx --conditions=react-server scripts/backup-tool.ts restore "$FOLDER"
