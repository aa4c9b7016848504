CREATE TYPE "public"."analysis_status" AS ENUM('queued', 'analysing', 'done', 'failed');--> statement-breakpoint
CREATE TYPE "public"."file_part" AS ENUM('stokes', 'anti_stokes', 'combined', 'dark');--> statement-breakpoint
CREATE TABLE "analyses" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"measurement_id" uuid NOT NULL,
	"settings" jsonb NOT NULL,
	"status" "analysis_status" DEFAULT 'queued' NOT NULL,
	"failure" jsonb,
	"attempts" integer DEFAULT 0 NOT NULL,
	"requested_by" text,
	"requested_by_token" integer,
	"started_at" timestamp with time zone,
	"finished_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "measurement_files" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "measurement_files_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"measurement_id" uuid NOT NULL,
	"part" "file_part" NOT NULL,
	"object_key" text NOT NULL,
	"file_name" text NOT NULL,
	"content_type" text NOT NULL,
	"bytes" bigint NOT NULL,
	"sha256" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "measurements" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"project_id" integer NOT NULL,
	"status" "analysis_status" DEFAULT 'queued' NOT NULL,
	"metadata" jsonb NOT NULL,
	"label" text,
	"batch" text,
	"series" text,
	"x" double precision,
	"y" double precision,
	"laser_power_mw" double precision,
	"acquired_at" timestamp with time zone,
	"uploaded_by" text,
	"uploaded_by_token" integer,
	"idempotency_key" text,
	"request_hash" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "readings" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"measurement_id" uuid NOT NULL,
	"analysis_id" uuid NOT NULL,
	"temperature_k" double precision,
	"u_temperature_k" double precision,
	"expanded_uncertainty_k" double precision,
	"coverage_factor" double precision NOT NULL,
	"worst_severity" text NOT NULL,
	"flag_codes" text[] NOT NULL,
	"engine_version" text NOT NULL,
	"result" jsonb NOT NULL,
	"spectra" jsonb NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "token_request_counts" (
	"token_id" integer NOT NULL,
	"window_start" timestamp with time zone NOT NULL,
	"count" integer DEFAULT 0 NOT NULL
);
--> statement-breakpoint
ALTER TABLE "analyses" ADD CONSTRAINT "analyses_measurement_id_measurements_id_fk" FOREIGN KEY ("measurement_id") REFERENCES "public"."measurements"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "analyses" ADD CONSTRAINT "analyses_requested_by_users_id_fk" FOREIGN KEY ("requested_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "analyses" ADD CONSTRAINT "analyses_requested_by_token_acquisition_tokens_id_fk" FOREIGN KEY ("requested_by_token") REFERENCES "public"."acquisition_tokens"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "measurement_files" ADD CONSTRAINT "measurement_files_measurement_id_measurements_id_fk" FOREIGN KEY ("measurement_id") REFERENCES "public"."measurements"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "measurements" ADD CONSTRAINT "measurements_project_id_projects_id_fk" FOREIGN KEY ("project_id") REFERENCES "public"."projects"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "measurements" ADD CONSTRAINT "measurements_uploaded_by_users_id_fk" FOREIGN KEY ("uploaded_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "measurements" ADD CONSTRAINT "measurements_uploaded_by_token_acquisition_tokens_id_fk" FOREIGN KEY ("uploaded_by_token") REFERENCES "public"."acquisition_tokens"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "readings" ADD CONSTRAINT "readings_measurement_id_measurements_id_fk" FOREIGN KEY ("measurement_id") REFERENCES "public"."measurements"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "readings" ADD CONSTRAINT "readings_analysis_id_analyses_id_fk" FOREIGN KEY ("analysis_id") REFERENCES "public"."analyses"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "token_request_counts" ADD CONSTRAINT "token_request_counts_token_id_acquisition_tokens_id_fk" FOREIGN KEY ("token_id") REFERENCES "public"."acquisition_tokens"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "analyses_measurement_id_created_at_index" ON "analyses" USING btree ("measurement_id","created_at");--> statement-breakpoint
CREATE INDEX "analyses_status_index" ON "analyses" USING btree ("status");--> statement-breakpoint
CREATE UNIQUE INDEX "measurement_files_measurement_id_part_index" ON "measurement_files" USING btree ("measurement_id","part");--> statement-breakpoint
CREATE INDEX "measurements_project_id_created_at_index" ON "measurements" USING btree ("project_id","created_at");--> statement-breakpoint
CREATE INDEX "measurements_project_id_series_index" ON "measurements" USING btree ("project_id","series");--> statement-breakpoint
CREATE INDEX "measurements_project_id_batch_index" ON "measurements" USING btree ("project_id","batch");--> statement-breakpoint
CREATE UNIQUE INDEX "measurements_project_id_idempotency_key_index" ON "measurements" USING btree ("project_id","idempotency_key") WHERE "measurements"."idempotency_key" is not null;--> statement-breakpoint
CREATE UNIQUE INDEX "readings_analysis_id_index" ON "readings" USING btree ("analysis_id");--> statement-breakpoint
CREATE INDEX "readings_measurement_id_created_at_index" ON "readings" USING btree ("measurement_id","created_at");--> statement-breakpoint
CREATE UNIQUE INDEX "token_request_counts_token_id_window_start_index" ON "token_request_counts" USING btree ("token_id","window_start");