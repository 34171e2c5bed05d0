/*
 * import_queue.c - the import's two threads: a reading thread reads and
 * checks rows into a bounded queue, the calling thread stores them.
 */
#include "import.h"

#include <pthread.h>
#include <stdlib.h>
#include <string.h>

/*
 * A CSV/TSV import runs on two threads: one reads, parses and checks rows
 * (bc_import__read_row) into a bounded queue of batches, the calling
 * thread stores them in the order read (bc_import__store_or_quarantine),
 * so every result, message and quarantine entry is the same as on one
 * thread. Only the calling thread touches the database. Memory is
 * bounded by the queue: PIPE_SLOTS batches of PIPE_ROWS rows, and a row
 * buffer that grew beyond ROW_KEEP_BYTES (a huge cell) is released
 * before the row is reused.
 * A waiting side is woken only when half the batches are ready for it
 * again (free for the reader, full for the storer) or the other side
 * stops: each wake-up costs both threads a system call or two, and a
 * wake-up per batch made the two threads take turns.
 * BATHYCHRON_IMPORT_THREADS=1 in the environment keeps it on one thread.
 */
#define PIPE_SLOTS 8
#define PIPE_ROWS 64
#define ROW_KEEP_BYTES 16384

typedef struct queue_slot {
	row rows[PIPE_ROWS];
	size_t n;
	int full;  /* filled by the reader and not yet stored */
	int last;  /* the reader stopped after these rows ... */
	int rc;    /* ... at the end of the input (0) or with an error */
	bc_err err;
} queue_slot;

struct row_queue {
	pthread_t thread;
	pthread_mutex_t mu;
	pthread_cond_t cv;
	int stop; /* storing failed: the reader stops */
	int nfull; /* batches filled and not yet stored */
	int reader_waits, storer_waits;
	queue_slot slot[PIPE_SLOTS];
};

static void row_trim(row *rw)
{
	bc_buf *b[] = {&rw->scratch, &rw->extra, &rw->raw, &rw->reason};
	for (size_t i = 0; i < sizeof b / sizeof b[0]; i++)
		if (b[i]->cap > ROW_KEEP_BYTES)
			bc__buf_free(b[i]);
}

static void *queue_reader(void *arg)
{
	importer *im = arg;
	row_queue *pp = im->pp;
	for (size_t k = 0;; k = (k + 1) % PIPE_SLOTS) {
		queue_slot *s = &pp->slot[k];
		pthread_mutex_lock(&pp->mu);
		while (s->full && !pp->stop) {
			pp->reader_waits = 1;
			pthread_cond_wait(&pp->cv, &pp->mu);
		}
		pp->reader_waits = 0;
		int stop = pp->stop;
		pthread_mutex_unlock(&pp->mu);
		if (stop)
			return NULL;
		int rc = BC_OK, more = 1;
		s->n = 0;
		while (s->n < PIPE_ROWS) {
			if ((more = bc_csv__next(im->csv, &s->err)) != 1)
				break;
			im->cur = &s->rows[s->n];
			row_trim(im->cur);
			if ((rc = bc_import__read_row(im, &s->err)))
				break;
			s->n++;
		}
		/* the end of the input (0), a reading error (< 0), a row error */
		if (more < 0)
			rc = more;
		s->last = more != 1 || rc != BC_OK;
		s->rc = rc;
		pthread_mutex_lock(&pp->mu);
		s->full = 1;
		pp->nfull++;
		/* a waiting storer has stored every batch: it is woken when
		 * half are full again, or at the last */
		if (pp->storer_waits && (s->last || pp->nfull >= PIPE_SLOTS / 2))
			pthread_cond_broadcast(&pp->cv);
		pthread_mutex_unlock(&pp->mu);
		if (s->last)
			return NULL;
	}
}

/* Starts the reader; BC_ERROR (nothing started) when a thread cannot be
 * had: the caller then reads on its own thread. */
int bc_import__queue_start(importer *im)
{
	const char *env = getenv("BATHYCHRON_IMPORT_THREADS");
	if (im->dwca || (env && strcmp(env, "1") == 0))
		return BC_ERROR;
	row_queue *pp = bc__calloc(1, sizeof *pp);
	if (!pp)
		return BC_ERROR;
	if (pthread_mutex_init(&pp->mu, NULL) != 0) {
		free(pp);
		return BC_ERROR;
	}
	if (pthread_cond_init(&pp->cv, NULL) != 0) {
		pthread_mutex_destroy(&pp->mu);
		free(pp);
		return BC_ERROR;
	}
	im->pp = pp;
	if (pthread_create(&pp->thread, NULL, queue_reader, im) != 0) {
		im->pp = NULL;
		pthread_cond_destroy(&pp->cv);
		pthread_mutex_destroy(&pp->mu);
		free(pp);
		return BC_ERROR;
	}
	return BC_OK;
}

/* Stores what the reader queues, in order, until the input ends or
 * either side fails; then waits for the reader. Returns 0 at the end
 * of the input, or the first error in input order. */
int bc_import__queue_store(importer *im, bc_err *err)
{
	row_queue *pp = im->pp;
	int rc = BC_OK;
	for (size_t k = 0;; k = (k + 1) % PIPE_SLOTS) {
		queue_slot *s = &pp->slot[k];
		pthread_mutex_lock(&pp->mu);
		while (!s->full) {
			pp->storer_waits = 1;
			pthread_cond_wait(&pp->cv, &pp->mu);
		}
		pp->storer_waits = 0;
		pthread_mutex_unlock(&pp->mu);
		for (size_t i = 0; i < s->n && rc == BC_OK; i++)
			rc = bc_import__store_or_quarantine(im, &s->rows[i], err);
		int last = s->last;
		if (rc == BC_OK && last && s->rc) {
			rc = s->rc;
			if (err)
				*err = s->err;
		}
		pthread_mutex_lock(&pp->mu);
		s->full = 0;
		pp->nfull--;
		if (rc)
			pp->stop = 1;
		/* the slot the reader waits for is the one freed first, so it
		 * is free by the time half are: no wake-up is lost. When no slot
		 * is full, nfull is 0 and the reader is woken. */
		if (pp->reader_waits && (pp->stop || pp->nfull <= PIPE_SLOTS / 2))
			pthread_cond_broadcast(&pp->cv);
		pthread_mutex_unlock(&pp->mu);
		if (rc || last)
			break;
	}
	pthread_join(pp->thread, NULL);
	return rc;
}

void bc_import__queue_free(row_queue *pp)
{
	if (!pp)
		return;
	for (size_t k = 0; k < PIPE_SLOTS; k++)
		for (size_t i = 0; i < PIPE_ROWS; i++)
			bc_import__row_free(&pp->slot[k].rows[i]);
	pthread_cond_destroy(&pp->cv);
	pthread_mutex_destroy(&pp->mu);
	free(pp);
}
