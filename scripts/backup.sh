#!/usr/bin/env bash
# Backs up the database and the object store into one folder:
#   scripts/backup.sh [FOLDER]      (default .data/backups/holonomy-<UTC time>)
# FOLDER/database.dump                pg_dump custom-format archive
# FOLDER/objects/, FOLDER/objects.json every object of the bucket with its SHA-256
# Reads DATABASE_URL and the S3_* variables like the app (lib/env.ts). Restore with scripts/restore.sh.
source "$(dirname "${BASH_SOURCE[0]}")/lib/common.sh"
cd "$ROOT"
command -v pg_dump >/dev/null || die "pg_dump is missing (Debian package postgresql-client)"
FOLDER="${1:-$DATA_DIR/backups/holonomy-$(date -u +%Y%m%dT%H%M%SZ)}"
AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED=true npx --no-install tsx --conditions=react-server scripts/backup-tool.ts backup "$FOLDER"
echo "$FOLDER"
