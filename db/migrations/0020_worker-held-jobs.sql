-- The jobs a worker process has in hand, so that another worker can hand them back to the queue
-- as soon as the first one's heartbeat stops, instead of after the jobs' lease.
ALTER TABLE "workers" ADD COLUMN "jobs" jsonb DEFAULT '[]'::jsonb NOT NULL;