-- PhenoPool initial schema (PostgreSQL). Mirrors prisma/schema.prisma and the SQLite migration;
-- test/db/migrate.test.ts writes and reads every model through the generated client on both.

CREATE TYPE "Role" AS ENUM ('coordinator', 'site_lead', 'viewer');
CREATE TYPE "DateConvention" AS ENUM ('jan1', 'apr1');
CREATE TYPE "ModeratorKind" AS ENUM ('numeric', 'categorical');
CREATE TYPE "ValueSource" AS ENUM ('entered', 'computed');
CREATE TYPE "SubmissionKind" AS ENUM ('brood_records', 'site_year_covariates', 'estimates');
CREATE TYPE "SubmissionStatus" AS ENUM ('accepted', 'superseded');
CREATE TYPE "Outcome" AS ENUM ('fledging_failure', 'fledglings_successful', 'recruitment', 'recruits_per_female', 'selection_gradient');
CREATE TYPE "EstimateLevel" AS ENUM ('within_year', 'between_year');
CREATE TYPE "EstimateTerm" AS ENUM ('linear', 'quadratic');
CREATE TYPE "EstimateScale" AS ENUM ('per_day', 'per_sd');
CREATE TYPE "LinkFunction" AS ENUM ('logit', 'log', 'identity');
CREATE TYPE "EstimateSource" AS ENUM ('computed', 'uploaded');

CREATE TABLE "User" (
    "id" SERIAL NOT NULL,
    "email" TEXT NOT NULL,
    "displayName" TEXT NOT NULL,
    "role" "Role" NOT NULL DEFAULT 'viewer',
    "createdAt" TIMESTAMP(3) NOT NULL DEFAULT CURRENT_TIMESTAMP,
    CONSTRAINT "User_pkey" PRIMARY KEY ("id")
);

CREATE TABLE "Species" (
    "id" SERIAL NOT NULL,
    "scientificName" TEXT NOT NULL,
    "commonName" TEXT NOT NULL,
    CONSTRAINT "Species_pkey" PRIMARY KEY ("id")
);

CREATE TABLE "Site" (
    "id" SERIAL NOT NULL,
    "code" TEXT NOT NULL,
    "name" TEXT NOT NULL,
    "speciesId" INTEGER NOT NULL,
    "latitude" DOUBLE PRECISION NOT NULL,
    "longitude" DOUBLE PRECISION NOT NULL,
    "elevationM" DOUBLE PRECISION,
    "habitat" TEXT,
    "firstYear" INTEGER NOT NULL,
    "lastYear" INTEGER NOT NULL,
    "dateConvention" "DateConvention" NOT NULL DEFAULT 'jan1',
    "leadUserId" INTEGER,
    "notes" TEXT,
    "createdAt" TIMESTAMP(3) NOT NULL DEFAULT CURRENT_TIMESTAMP,
    "updatedAt" TIMESTAMP(3) NOT NULL,
    CONSTRAINT "Site_pkey" PRIMARY KEY ("id")
);

CREATE TABLE "Moderator" (
    "id" SERIAL NOT NULL,
    "key" TEXT NOT NULL,
    "label" TEXT NOT NULL,
    "unit" TEXT,
    "kind" "ModeratorKind" NOT NULL,
    "description" TEXT NOT NULL,
    "builtIn" BOOLEAN NOT NULL DEFAULT false,
    CONSTRAINT "Moderator_pkey" PRIMARY KEY ("id")
);

CREATE TABLE "ModeratorValue" (
    "id" SERIAL NOT NULL,
    "moderatorId" INTEGER NOT NULL,
    "siteId" INTEGER NOT NULL,
    "numericValue" DOUBLE PRECISION,
    "categoricalValue" TEXT,
    "standardError" DOUBLE PRECISION,
    "source" "ValueSource" NOT NULL DEFAULT 'entered',
    "method" TEXT,
    CONSTRAINT "ModeratorValue_pkey" PRIMARY KEY ("id")
);

CREATE TABLE "Submission" (
    "id" SERIAL NOT NULL,
    "siteId" INTEGER NOT NULL,
    "kind" "SubmissionKind" NOT NULL,
    "fileName" TEXT NOT NULL,
    "sha256" TEXT NOT NULL,
    "rowCount" INTEGER NOT NULL,
    "submittedById" INTEGER,
    "submittedAt" TIMESTAMP(3) NOT NULL DEFAULT CURRENT_TIMESTAMP,
    "status" "SubmissionStatus" NOT NULL DEFAULT 'accepted',
    "supersedesId" INTEGER,
    CONSTRAINT "Submission_pkey" PRIMARY KEY ("id")
);

CREATE TABLE "SiteYear" (
    "id" SERIAL NOT NULL,
    "siteId" INTEGER NOT NULL,
    "year" INTEGER NOT NULL,
    "foodPeakDoy" DOUBLE PRECISION,
    "foodPeakSe" DOUBLE PRECISION,
    "meanSpringTempC" DOUBLE PRECISION,
    "broodCount" INTEGER,
    "submissionId" INTEGER NOT NULL,
    CONSTRAINT "SiteYear_pkey" PRIMARY KEY ("id")
);

CREATE TABLE "BroodRecord" (
    "id" SERIAL NOT NULL,
    "siteId" INTEGER NOT NULL,
    "year" INTEGER NOT NULL,
    "femaleId" TEXT NOT NULL,
    "layDateDoy" INTEGER NOT NULL,
    "clutchSize" INTEGER NOT NULL,
    "hatchDateDoy" INTEGER,
    "fledglings" INTEGER NOT NULL,
    "recruits" INTEGER NOT NULL,
    "submissionId" INTEGER NOT NULL,
    CONSTRAINT "BroodRecord_pkey" PRIMARY KEY ("id")
);

CREATE TABLE "Estimate" (
    "id" SERIAL NOT NULL,
    "siteId" INTEGER NOT NULL,
    "submissionId" INTEGER,
    "outcome" "Outcome" NOT NULL,
    "level" "EstimateLevel" NOT NULL,
    "term" "EstimateTerm" NOT NULL,
    "year" INTEGER,
    "value" DOUBLE PRECISION NOT NULL,
    "standardError" DOUBLE PRECISION NOT NULL,
    "n" INTEGER NOT NULL,
    "scale" "EstimateScale" NOT NULL,
    "link" "LinkFunction" NOT NULL,
    "source" "EstimateSource" NOT NULL,
    "method" TEXT NOT NULL,
    "createdAt" TIMESTAMP(3) NOT NULL DEFAULT CURRENT_TIMESTAMP,
    CONSTRAINT "Estimate_pkey" PRIMARY KEY ("id")
);

CREATE TABLE "Analysis" (
    "id" SERIAL NOT NULL,
    "name" TEXT NOT NULL,
    "specification" TEXT NOT NULL,
    "createdById" INTEGER,
    "createdAt" TIMESTAMP(3) NOT NULL DEFAULT CURRENT_TIMESTAMP,
    "updatedAt" TIMESTAMP(3) NOT NULL,
    CONSTRAINT "Analysis_pkey" PRIMARY KEY ("id")
);

CREATE TABLE "AnalysisRun" (
    "id" SERIAL NOT NULL,
    "analysisId" INTEGER NOT NULL,
    "dataFingerprint" TEXT NOT NULL,
    "result" TEXT NOT NULL,
    "engineVersion" TEXT NOT NULL,
    "createdAt" TIMESTAMP(3) NOT NULL DEFAULT CURRENT_TIMESTAMP,
    CONSTRAINT "AnalysisRun_pkey" PRIMARY KEY ("id")
);

CREATE TABLE "NetworkSetting" (
    "key" TEXT NOT NULL,
    "value" TEXT NOT NULL,
    "updatedAt" TIMESTAMP(3) NOT NULL,
    CONSTRAINT "NetworkSetting_pkey" PRIMARY KEY ("key")
);

CREATE UNIQUE INDEX "User_email_key" ON "User"("email");
CREATE UNIQUE INDEX "Species_scientificName_key" ON "Species"("scientificName");
CREATE UNIQUE INDEX "Site_code_key" ON "Site"("code");
CREATE UNIQUE INDEX "Moderator_key_key" ON "Moderator"("key");
CREATE UNIQUE INDEX "ModeratorValue_moderatorId_siteId_key" ON "ModeratorValue"("moderatorId", "siteId");
CREATE UNIQUE INDEX "Submission_supersedesId_key" ON "Submission"("supersedesId");
CREATE INDEX "Submission_siteId_kind_status_idx" ON "Submission"("siteId", "kind", "status");
CREATE INDEX "Submission_sha256_idx" ON "Submission"("sha256");
CREATE UNIQUE INDEX "SiteYear_submissionId_year_key" ON "SiteYear"("submissionId", "year");
CREATE INDEX "SiteYear_siteId_year_idx" ON "SiteYear"("siteId", "year");
CREATE INDEX "BroodRecord_siteId_year_idx" ON "BroodRecord"("siteId", "year");
CREATE INDEX "BroodRecord_submissionId_idx" ON "BroodRecord"("submissionId");
CREATE INDEX "Estimate_siteId_outcome_level_idx" ON "Estimate"("siteId", "outcome", "level");
CREATE UNIQUE INDEX "Analysis_name_key" ON "Analysis"("name");
CREATE INDEX "AnalysisRun_analysisId_idx" ON "AnalysisRun"("analysisId");

ALTER TABLE "Site" ADD CONSTRAINT "Site_speciesId_fkey" FOREIGN KEY ("speciesId") REFERENCES "Species"("id") ON DELETE RESTRICT ON UPDATE CASCADE;
ALTER TABLE "Site" ADD CONSTRAINT "Site_leadUserId_fkey" FOREIGN KEY ("leadUserId") REFERENCES "User"("id") ON DELETE SET NULL ON UPDATE CASCADE;
ALTER TABLE "ModeratorValue" ADD CONSTRAINT "ModeratorValue_moderatorId_fkey" FOREIGN KEY ("moderatorId") REFERENCES "Moderator"("id") ON DELETE CASCADE ON UPDATE CASCADE;
ALTER TABLE "ModeratorValue" ADD CONSTRAINT "ModeratorValue_siteId_fkey" FOREIGN KEY ("siteId") REFERENCES "Site"("id") ON DELETE CASCADE ON UPDATE CASCADE;
ALTER TABLE "Submission" ADD CONSTRAINT "Submission_siteId_fkey" FOREIGN KEY ("siteId") REFERENCES "Site"("id") ON DELETE CASCADE ON UPDATE CASCADE;
ALTER TABLE "Submission" ADD CONSTRAINT "Submission_submittedById_fkey" FOREIGN KEY ("submittedById") REFERENCES "User"("id") ON DELETE SET NULL ON UPDATE CASCADE;
ALTER TABLE "Submission" ADD CONSTRAINT "Submission_supersedesId_fkey" FOREIGN KEY ("supersedesId") REFERENCES "Submission"("id") ON DELETE SET NULL ON UPDATE CASCADE;
ALTER TABLE "SiteYear" ADD CONSTRAINT "SiteYear_siteId_fkey" FOREIGN KEY ("siteId") REFERENCES "Site"("id") ON DELETE CASCADE ON UPDATE CASCADE;
ALTER TABLE "SiteYear" ADD CONSTRAINT "SiteYear_submissionId_fkey" FOREIGN KEY ("submissionId") REFERENCES "Submission"("id") ON DELETE CASCADE ON UPDATE CASCADE;
ALTER TABLE "BroodRecord" ADD CONSTRAINT "BroodRecord_siteId_fkey" FOREIGN KEY ("siteId") REFERENCES "Site"("id") ON DELETE CASCADE ON UPDATE CASCADE;
ALTER TABLE "BroodRecord" ADD CONSTRAINT "BroodRecord_submissionId_fkey" FOREIGN KEY ("submissionId") REFERENCES "Submission"("id") ON DELETE CASCADE ON UPDATE CASCADE;
ALTER TABLE "Estimate" ADD CONSTRAINT "Estimate_siteId_fkey" FOREIGN KEY ("siteId") REFERENCES "Site"("id") ON DELETE CASCADE ON UPDATE CASCADE;
ALTER TABLE "Estimate" ADD CONSTRAINT "Estimate_submissionId_fkey" FOREIGN KEY ("submissionId") REFERENCES "Submission"("id") ON DELETE CASCADE ON UPDATE CASCADE;
ALTER TABLE "Analysis" ADD CONSTRAINT "Analysis_createdById_fkey" FOREIGN KEY ("createdById") REFERENCES "User"("id") ON DELETE SET NULL ON UPDATE CASCADE;
ALTER TABLE "AnalysisRun" ADD CONSTRAINT "AnalysisRun_analysisId_fkey" FOREIGN KEY ("analysisId") REFERENCES "Analysis"("id") ON DELETE CASCADE ON UPDATE CASCADE;

CREATE TYPE "JobStatus" AS ENUM ('queued', 'running', 'succeeded', 'failed', 'cancelled');

CREATE TABLE "ColumnMapping" (
    "id" SERIAL NOT NULL,
    "siteId" INTEGER NOT NULL,
    "kind" "SubmissionKind" NOT NULL,
    "mapping" TEXT NOT NULL,
    "updatedAt" TIMESTAMP(3) NOT NULL,
    CONSTRAINT "ColumnMapping_pkey" PRIMARY KEY ("id")
);
CREATE UNIQUE INDEX "ColumnMapping_siteId_kind_key" ON "ColumnMapping"("siteId", "kind");
ALTER TABLE "ColumnMapping" ADD CONSTRAINT "ColumnMapping_siteId_fkey" FOREIGN KEY ("siteId") REFERENCES "Site"("id") ON DELETE CASCADE ON UPDATE CASCADE;

CREATE TABLE "Job" (
    "id" SERIAL NOT NULL,
    "kind" TEXT NOT NULL,
    "payload" TEXT NOT NULL,
    "status" "JobStatus" NOT NULL DEFAULT 'queued',
    "progress" DOUBLE PRECISION NOT NULL DEFAULT 0,
    "message" TEXT,
    "result" TEXT,
    "siteId" INTEGER,
    "createdAt" TIMESTAMP(3) NOT NULL DEFAULT CURRENT_TIMESTAMP,
    "startedAt" TIMESTAMP(3),
    "finishedAt" TIMESTAMP(3),
    CONSTRAINT "Job_pkey" PRIMARY KEY ("id")
);
CREATE INDEX "Job_status_idx" ON "Job"("status");
CREATE INDEX "Job_siteId_kind_idx" ON "Job"("siteId", "kind");
ALTER TABLE "Job" ADD CONSTRAINT "Job_siteId_fkey" FOREIGN KEY ("siteId") REFERENCES "Site"("id") ON DELETE CASCADE ON UPDATE CASCADE;
