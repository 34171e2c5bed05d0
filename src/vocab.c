/*
 * vocab.c - shipped vocabularies (placeholder seed until ingest lands;
 * replaced whole).
 */
#include "db.h"

int bc_vocab__seed(bc_db *db, bc_err *err)
{
	(void)db;
	(void)err;
	return BC_OK;
}
