-- PhenoPool initial schema (SQLite). Mirrors prisma/schema.prisma; test/db/migrate.test.ts
-- writes and reads every model through the generated client to prove they agree.

CREATE TABLE "User" (
    "id" INTEGER NOT NULL PRIMARY KEY AUTOINCREMENT,
    "email" TEXT NOT NULL,
    "displayName" TEXT NOT NULL,
    "role" TEXT NOT NULL DEFAULT 'viewer',
    "createdAt" DATETIME NOT NULL DEFAULT CURRENT_TIMESTAMP
);
CREATE UNIQUE INDEX "User_email_key" ON "User"("email");

CREATE TABLE "Species" (
    "id" INTEGER NOT NULL PRIMARY KEY AUTOINCREMENT,
    "scientificName" TEXT NOT NULL,
    "commonName" TEXT NOT NULL
);
CREATE UNIQUE INDEX "Species_scientificName_key" ON "Species"("scientificName");

CREATE TABLE "Site" (
    "id" INTEGER NOT NULL PRIMARY KEY AUTOINCREMENT,
    "code" TEXT NOT NULL,
    "name" TEXT NOT NULL,
    "speciesId" INTEGER NOT NULL,
    "latitude" REAL NOT NULL,
    "longitude" REAL NOT NULL,
    "elevationM" REAL,
    "habitat" TEXT,
    "firstYear" INTEGER NOT NULL,
    "lastYear" INTEGER NOT NULL,
    "dateConvention" TEXT NOT NULL DEFAULT 'jan1',
    "leadUserId" INTEGER,
    "notes" TEXT,
    "createdAt" DATETIME NOT NULL DEFAULT CURRENT_TIMESTAMP,
    "updatedAt" DATETIME NOT NULL,
    CONSTRAINT "Site_speciesId_fkey" FOREIGN KEY ("speciesId") REFERENCES "Species" ("id") ON DELETE RESTRICT ON UPDATE CASCADE,
    CONSTRAINT "Site_leadUserId_fkey" FOREIGN KEY ("leadUserId") REFERENCES "User" ("id") ON DELETE SET NULL ON UPDATE CASCADE
);
CREATE UNIQUE INDEX "Site_code_key" ON "Site"("code");

CREATE TABLE "Moderator" (
    "id" INTEGER NOT NULL PRIMARY KEY AUTOINCREMENT,
    "key" TEXT NOT NULL,
    "label" TEXT NOT NULL,
    "unit" TEXT,
    "kind" TEXT NOT NULL,
    "description" TEXT NOT NULL,
    "builtIn" BOOLEAN NOT NULL DEFAULT false
);
CREATE UNIQUE INDEX "Moderator_key_key" ON "Moderator"("key");

CREATE TABLE "ModeratorValue" (
    "id" INTEGER NOT NULL PRIMARY KEY AUTOINCREMENT,
    "moderatorId" INTEGER NOT NULL,
    "siteId" INTEGER NOT NULL,
    "numericValue" REAL,
    "categoricalValue" TEXT,
    "standardError" REAL,
    "source" TEXT NOT NULL DEFAULT 'entered',
    "method" TEXT,
    CONSTRAINT "ModeratorValue_moderatorId_fkey" FOREIGN KEY ("moderatorId") REFERENCES "Moderator" ("id") ON DELETE CASCADE ON UPDATE CASCADE,
    CONSTRAINT "ModeratorValue_siteId_fkey" FOREIGN KEY ("siteId") REFERENCES "Site" ("id") ON DELETE CASCADE ON UPDATE CASCADE
);
CREATE UNIQUE INDEX "ModeratorValue_moderatorId_siteId_key" ON "ModeratorValue"("moderatorId", "siteId");

CREATE TABLE "Submission" (
    "id" INTEGER NOT NULL PRIMARY KEY AUTOINCREMENT,
    "siteId" INTEGER NOT NULL,
    "kind" TEXT NOT NULL,
    "fileName" TEXT NOT NULL,
    "sha256" TEXT NOT NULL,
    "rowCount" INTEGER NOT NULL,
    "submittedById" INTEGER,
    "submittedAt" DATETIME NOT NULL DEFAULT CURRENT_TIMESTAMP,
    "status" TEXT NOT NULL DEFAULT 'accepted',
    "supersedesId" INTEGER,
    CONSTRAINT "Submission_siteId_fkey" FOREIGN KEY ("siteId") REFERENCES "Site" ("id") ON DELETE CASCADE ON UPDATE CASCADE,
    CONSTRAINT "Submission_submittedById_fkey" FOREIGN KEY ("submittedById") REFERENCES "User" ("id") ON DELETE SET NULL ON UPDATE CASCADE,
    CONSTRAINT "Submission_supersedesId_fkey" FOREIGN KEY ("supersedesId") REFERENCES "Submission" ("id") ON DELETE SET NULL ON UPDATE CASCADE
);
CREATE UNIQUE INDEX "Submission_supersedesId_key" ON "Submission"("supersedesId");
CREATE INDEX "Submission_siteId_kind_status_idx" ON "Submission"("siteId", "kind", "status");
CREATE INDEX "Submission_sha256_idx" ON "Submission"("sha256");

CREATE TABLE "SiteYear" (
    "id" INTEGER NOT NULL PRIMARY KEY AUTOINCREMENT,
    "siteId" INTEGER NOT NULL,
    "year" INTEGER NOT NULL,
    "foodPeakDoy" REAL,
    "foodPeakSe" REAL,
    "meanSpringTempC" REAL,
    "broodCount" INTEGER,
    "submissionId" INTEGER NOT NULL,
    CONSTRAINT "SiteYear_siteId_fkey" FOREIGN KEY ("siteId") REFERENCES "Site" ("id") ON DELETE CASCADE ON UPDATE CASCADE,
    CONSTRAINT "SiteYear_submissionId_fkey" FOREIGN KEY ("submissionId") REFERENCES "Submission" ("id") ON DELETE CASCADE ON UPDATE CASCADE
);
CREATE UNIQUE INDEX "SiteYear_submissionId_year_key" ON "SiteYear"("submissionId", "year");
CREATE INDEX "SiteYear_siteId_year_idx" ON "SiteYear"("siteId", "year");

CREATE TABLE "BroodRecord" (
    "id" INTEGER NOT NULL PRIMARY KEY AUTOINCREMENT,
    "siteId" INTEGER NOT NULL,
    "year" INTEGER NOT NULL,
    "femaleId" TEXT NOT NULL,
    "layDateDoy" INTEGER NOT NULL,
    "clutchSize" INTEGER NOT NULL,
    "hatchDateDoy" INTEGER,
    "fledglings" INTEGER NOT NULL,
    "recruits" INTEGER NOT NULL,
    "submissionId" INTEGER NOT NULL,
    CONSTRAINT "BroodRecord_siteId_fkey" FOREIGN KEY ("siteId") REFERENCES "Site" ("id") ON DELETE CASCADE ON UPDATE CASCADE,
    CONSTRAINT "BroodRecord_submissionId_fkey" FOREIGN KEY ("submissionId") REFERENCES "Submission" ("id") ON DELETE CASCADE ON UPDATE CASCADE
);
CREATE INDEX "BroodRecord_siteId_year_idx" ON "BroodRecord"("siteId", "year");
CREATE INDEX "BroodRecord_submissionId_idx" ON "BroodRecord"("submissionId");

CREATE TABLE "Estimate" (
    "id" INTEGER NOT NULL PRIMARY KEY AUTOINCREMENT,
    "siteId" INTEGER NOT NULL,
    "submissionId" INTEGER,
    "outcome" TEXT NOT NULL,
    "level" TEXT NOT NULL,
    "term" TEXT NOT NULL,
    "year" INTEGER,
    "value" REAL NOT NULL,
    "standardError" REAL NOT NULL,
    "n" INTEGER NOT NULL,
    "scale" TEXT NOT NULL,
    "link" TEXT NOT NULL,
    "source" TEXT NOT NULL,
    "method" TEXT NOT NULL,
    "createdAt" DATETIME NOT NULL DEFAULT CURRENT_TIMESTAMP,
    CONSTRAINT "Estimate_siteId_fkey" FOREIGN KEY ("siteId") REFERENCES "Site" ("id") ON DELETE CASCADE ON UPDATE CASCADE,
    CONSTRAINT "Estimate_submissionId_fkey" FOREIGN KEY ("submissionId") REFERENCES "Submission" ("id") ON DELETE CASCADE ON UPDATE CASCADE
);
CREATE INDEX "Estimate_siteId_outcome_level_idx" ON "Estimate"("siteId", "outcome", "level");

CREATE TABLE "Analysis" (
    "id" INTEGER NOT NULL PRIMARY KEY AUTOINCREMENT,
    "name" TEXT NOT NULL,
    "specification" TEXT NOT NULL,
    "createdById" INTEGER,
    "createdAt" DATETIME NOT NULL DEFAULT CURRENT_TIMESTAMP,
    "updatedAt" DATETIME NOT NULL,
    CONSTRAINT "Analysis_createdById_fkey" FOREIGN KEY ("createdById") REFERENCES "User" ("id") ON DELETE SET NULL ON UPDATE CASCADE
);
CREATE UNIQUE INDEX "Analysis_name_key" ON "Analysis"("name");

CREATE TABLE "AnalysisRun" (
    "id" INTEGER NOT NULL PRIMARY KEY AUTOINCREMENT,
    "analysisId" INTEGER NOT NULL,
    "dataFingerprint" TEXT NOT NULL,
    "result" TEXT NOT NULL,
    "engineVersion" TEXT NOT NULL,
    "createdAt" DATETIME NOT NULL DEFAULT CURRENT_TIMESTAMP,
    CONSTRAINT "AnalysisRun_analysisId_fkey" FOREIGN KEY ("analysisId") REFERENCES "Analysis" ("id") ON DELETE CASCADE ON UPDATE CASCADE
);
CREATE INDEX "AnalysisRun_analysisId_idx" ON "AnalysisRun"("analysisId");

CREATE TABLE "NetworkSetting" (
    "key" TEXT NOT NULL PRIMARY KEY,
    "value" TEXT NOT NULL,
    "updatedAt" DATETIME NOT NULL
);

CREATE TABLE "ColumnMapping" (
    "id" INTEGER NOT NULL PRIMARY KEY AUTOINCREMENT,
    "siteId" INTEGER NOT NULL,
    "kind" TEXT NOT NULL,
    "mapping" TEXT NOT NULL,
    "updatedAt" DATETIME NOT NULL,
    CONSTRAINT "ColumnMapping_siteId_fkey" FOREIGN KEY ("siteId") REFERENCES "Site" ("id") ON DELETE CASCADE ON UPDATE CASCADE
);
CREATE UNIQUE INDEX "ColumnMapping_siteId_kind_key" ON "ColumnMapping"("siteId", "kind");

CREATE TABLE "Job" (
    "id" INTEGER NOT NULL PRIMARY KEY AUTOINCREMENT,
    "kind" TEXT NOT NULL,
    "payload" TEXT NOT NULL,
    "status" TEXT NOT NULL DEFAULT 'queued',
    "progress" REAL NOT NULL DEFAULT 0,
    "message" TEXT,
    "result" TEXT,
    "siteId" INTEGER,
    "createdAt" DATETIME NOT NULL DEFAULT CURRENT_TIMESTAMP,
    "startedAt" DATETIME,
    "finishedAt" DATETIME,
    CONSTRAINT "Job_siteId_fkey" FOREIGN KEY ("siteId") REFERENCES "Site" ("id") ON DELETE CASCADE ON UPDATE CASCADE
);
CREATE INDEX "Job_status_idx" ON "Job"("status");
CREATE INDEX "Job_siteId_kind_idx" ON "Job"("siteId", "kind");
