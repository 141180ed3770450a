-- Accounts, sessions, API tokens, sign-in attempts and the audit trail (PostgreSQL).
ALTER TABLE "User" ADD COLUMN "passwordHash" TEXT;
ALTER TABLE "User" ADD COLUMN "active" BOOLEAN NOT NULL DEFAULT true;

CREATE TABLE "Session" (
    "id" SERIAL NOT NULL,
    "tokenHash" TEXT NOT NULL,
    "userId" INTEGER NOT NULL,
    "createdAt" TIMESTAMP(3) NOT NULL DEFAULT CURRENT_TIMESTAMP,
    "lastSeenAt" TIMESTAMP(3) NOT NULL DEFAULT CURRENT_TIMESTAMP,
    "expiresAt" TIMESTAMP(3) NOT NULL,
    CONSTRAINT "Session_pkey" PRIMARY KEY ("id")
);
CREATE UNIQUE INDEX "Session_tokenHash_key" ON "Session"("tokenHash");
CREATE INDEX "Session_userId_idx" ON "Session"("userId");
ALTER TABLE "Session" ADD CONSTRAINT "Session_userId_fkey" FOREIGN KEY ("userId") REFERENCES "User"("id") ON DELETE CASCADE ON UPDATE CASCADE;

CREATE TABLE "ApiToken" (
    "id" SERIAL NOT NULL,
    "userId" INTEGER NOT NULL,
    "name" TEXT NOT NULL,
    "tokenHash" TEXT NOT NULL,
    "prefix" TEXT NOT NULL,
    "createdAt" TIMESTAMP(3) NOT NULL DEFAULT CURRENT_TIMESTAMP,
    "lastUsedAt" TIMESTAMP(3),
    "revokedAt" TIMESTAMP(3),
    CONSTRAINT "ApiToken_pkey" PRIMARY KEY ("id")
);
CREATE UNIQUE INDEX "ApiToken_tokenHash_key" ON "ApiToken"("tokenHash");
CREATE INDEX "ApiToken_userId_idx" ON "ApiToken"("userId");
ALTER TABLE "ApiToken" ADD CONSTRAINT "ApiToken_userId_fkey" FOREIGN KEY ("userId") REFERENCES "User"("id") ON DELETE CASCADE ON UPDATE CASCADE;

CREATE TABLE "SignInAttempt" (
    "id" SERIAL NOT NULL,
    "email" TEXT NOT NULL,
    "address" TEXT NOT NULL,
    "succeeded" BOOLEAN NOT NULL,
    "at" TIMESTAMP(3) NOT NULL DEFAULT CURRENT_TIMESTAMP,
    CONSTRAINT "SignInAttempt_pkey" PRIMARY KEY ("id")
);
CREATE INDEX "SignInAttempt_email_at_idx" ON "SignInAttempt"("email", "at");
CREATE INDEX "SignInAttempt_address_at_idx" ON "SignInAttempt"("address", "at");

CREATE TABLE "AuditEntry" (
    "id" SERIAL NOT NULL,
    "at" TIMESTAMP(3) NOT NULL DEFAULT CURRENT_TIMESTAMP,
    "actorUserId" INTEGER,
    "actorLabel" TEXT NOT NULL,
    "action" TEXT NOT NULL,
    "entityType" TEXT NOT NULL,
    "entityId" TEXT,
    "summary" TEXT NOT NULL,
    "sha256" TEXT,
    CONSTRAINT "AuditEntry_pkey" PRIMARY KEY ("id")
);
CREATE INDEX "AuditEntry_at_idx" ON "AuditEntry"("at");
CREATE INDEX "AuditEntry_entityType_entityId_idx" ON "AuditEntry"("entityType", "entityId");
ALTER TABLE "AuditEntry" ADD CONSTRAINT "AuditEntry_actorUserId_fkey" FOREIGN KEY ("actorUserId") REFERENCES "User"("id") ON DELETE SET NULL ON UPDATE CASCADE;

-- The trail is append-only: an entry, once written, is never changed.
CREATE FUNCTION "audit_entry_append_only"() RETURNS trigger AS $$
BEGIN
    IF NEW."at" IS DISTINCT FROM OLD."at" OR NEW."actorLabel" IS DISTINCT FROM OLD."actorLabel"
       OR NEW."action" IS DISTINCT FROM OLD."action" OR NEW."entityType" IS DISTINCT FROM OLD."entityType"
       OR NEW."entityId" IS DISTINCT FROM OLD."entityId" OR NEW."summary" IS DISTINCT FROM OLD."summary"
       OR NEW."sha256" IS DISTINCT FROM OLD."sha256" THEN
        RAISE EXCEPTION 'the audit trail is append-only';
    END IF;
    RETURN NEW;
END;
$$ LANGUAGE plpgsql;
CREATE TRIGGER "AuditEntry_append_only" BEFORE UPDATE ON "AuditEntry"
    FOR EACH ROW EXECUTE FUNCTION "audit_entry_append_only"();
