CREATE TYPE "public"."series_kind" AS ENUM('batch', 'power-sweep', 'map', 'time');--> statement-breakpoint
CREATE TABLE "series" (
	"id" integer PRIMARY KEY GENERATED ALWAYS AS IDENTITY (sequence name "series_id_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"project_id" integer NOT NULL,
	"name" text NOT NULL,
	"kind" "series_kind" NOT NULL,
	"description" text DEFAULT '' NOT NULL,
	"lower_spec_k" double precision,
	"upper_spec_k" double precision,
	"baseline_size" integer,
	"created_by" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "series_alerts" (
	"reading_id" uuid NOT NULL,
	"user_id" text NOT NULL,
	"rules" text[] NOT NULL,
	"sent_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "series_alerts_reading_id_user_id_pk" PRIMARY KEY("reading_id","user_id")
);
--> statement-breakpoint
CREATE TABLE "series_subscriptions" (
	"series_id" integer NOT NULL,
	"user_id" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "series_subscriptions_series_id_user_id_pk" PRIMARY KEY("series_id","user_id")
);
--> statement-breakpoint
ALTER TABLE "series" ADD CONSTRAINT "series_project_id_projects_id_fk" FOREIGN KEY ("project_id") REFERENCES "public"."projects"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "series" ADD CONSTRAINT "series_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "series_alerts" ADD CONSTRAINT "series_alerts_reading_id_readings_id_fk" FOREIGN KEY ("reading_id") REFERENCES "public"."readings"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "series_alerts" ADD CONSTRAINT "series_alerts_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "series_subscriptions" ADD CONSTRAINT "series_subscriptions_series_id_series_id_fk" FOREIGN KEY ("series_id") REFERENCES "public"."series"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "series_subscriptions" ADD CONSTRAINT "series_subscriptions_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "series_project_id_name_index" ON "series" USING btree ("project_id","name");