-- A submission can be withdrawn (soft delete): status 'withdrawn' (PostgreSQL).
ALTER TYPE "SubmissionStatus" ADD VALUE IF NOT EXISTS 'withdrawn';
