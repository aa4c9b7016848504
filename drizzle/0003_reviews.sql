CREATE TYPE "public"."sign_off_decision" AS ENUM('approved', 'returned');--> statement-breakpoint
CREATE TABLE "sign_offs" (
	"id" bigint PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "sign_offs_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 9223372036854775807 START WITH 1 CACHE 1),
	"reading_id" uuid NOT NULL,
	"reviewer_id" text,
	"decision" "sign_off_decision" NOT NULL,
	"comment" text DEFAULT '' NOT NULL,
	"decided_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "projects" ADD COLUMN "sign_off_required" boolean DEFAULT true NOT NULL;--> statement-breakpoint
ALTER TABLE "sign_offs" ADD CONSTRAINT "sign_offs_reading_id_readings_id_fk" FOREIGN KEY ("reading_id") REFERENCES "public"."readings"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sign_offs" ADD CONSTRAINT "sign_offs_reviewer_id_users_id_fk" FOREIGN KEY ("reviewer_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "sign_offs_reading_id_decided_at_index" ON "sign_offs" USING btree ("reading_id","decided_at");--> statement-breakpoint
CREATE UNIQUE INDEX "sign_offs_one_approval" ON "sign_offs" USING btree ("reading_id") WHERE "sign_offs"."decision" = 'approved';