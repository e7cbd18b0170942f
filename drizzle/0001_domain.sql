CREATE TYPE "public"."club_role" AS ENUM('member', 'steward');--> statement-breakpoint
CREATE TYPE "public"."dimension" AS ENUM('mass', 'volume', 'count');--> statement-breakpoint
CREATE TYPE "public"."hazard_kind" AS ENUM('hunting', 'terrain', 'ticks', 'water', 'wildlife', 'other');--> statement-breakpoint
CREATE TYPE "public"."limit_scope" AS ENUM('visit', 'day', 'season', 'parcel-season', 'club-season');--> statement-breakpoint
CREATE TYPE "public"."mail_state" AS ENUM('queued', 'sent', 'failed');--> statement-breakpoint
CREATE TYPE "public"."membership_state" AS ENUM('invited', 'active', 'left', 'removed');--> statement-breakpoint
CREATE TYPE "public"."method" AS ENUM('cut', 'pick', 'dig', 'strip', 'gather-fallen');--> statement-breakpoint
CREATE TYPE "public"."parcel_status" AS ENUM('draft', 'listed', 'archived');--> statement-breakpoint
CREATE TYPE "public"."payment_state" AS ENUM('pending', 'paid', 'cancelled', 'refunded', 'failed');--> statement-breakpoint
CREATE TYPE "public"."permit_state" AS ENUM('requested', 'approved', 'active', 'expired', 'revoked', 'declined');--> statement-breakpoint
CREATE TYPE "public"."role" AS ENUM('forager', 'landowner', 'admin');--> statement-breakpoint
CREATE TYPE "public"."species_kind" AS ENUM('mushroom', 'leaf', 'shoot', 'root', 'flower', 'fruit', 'nut', 'bark');--> statement-breakpoint
CREATE TYPE "public"."unit" AS ENUM('g', 'kg', 'oz', 'lb', 'mL', 'L', 'us-cup', 'us-pint', 'us-quart', 'us-gallon', 'stem', 'bulb', 'fruiting-body', 'plant');--> statement-breakpoint
CREATE TYPE "public"."upload_purpose" AS ENUM('harvest-photo', 'boundary-file');--> statement-breakpoint
CREATE TYPE "public"."verdict" AS ENUM('clear', 'outside', 'no-permit', 'edge', 'closed');--> statement-breakpoint
CREATE TYPE "public"."visit_end" AS ENUM('check-out', 'end-of-day');--> statement-breakpoint
CREATE TABLE "accounts" (
	"user_id" text NOT NULL,
	"type" text NOT NULL,
	"provider" text NOT NULL,
	"provider_account_id" text NOT NULL,
	"refresh_token" text,
	"access_token" text,
	"expires_at" integer,
	"token_type" text,
	"scope" text,
	"id_token" text,
	"session_state" text,
	CONSTRAINT "accounts_provider_provider_account_id_pk" PRIMARY KEY("provider","provider_account_id")
);
--> statement-breakpoint
CREATE TABLE "sessions" (
	"session_token" text PRIMARY KEY NOT NULL,
	"user_id" text NOT NULL,
	"expires" timestamp with time zone NOT NULL
);
--> statement-breakpoint
CREATE TABLE "users" (
	"id" text PRIMARY KEY NOT NULL,
	"name" text,
	"email" text NOT NULL,
	"email_verified" timestamp with time zone,
	"image" text,
	"roles" "role"[] DEFAULT '{forager}'::role[] NOT NULL,
	"landowner_verified_at" timestamp with time zone,
	"landowner_verified_by" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "users_email_unique" UNIQUE("email")
);
--> statement-breakpoint
CREATE TABLE "verification_tokens" (
	"identifier" text NOT NULL,
	"token" text NOT NULL,
	"expires" timestamp with time zone NOT NULL,
	CONSTRAINT "verification_tokens_identifier_token_pk" PRIMARY KEY("identifier","token")
);
--> statement-breakpoint
CREATE TABLE "club_memberships" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"club_id" uuid NOT NULL,
	"user_id" text NOT NULL,
	"role" "club_role" DEFAULT 'member' NOT NULL,
	"state" "membership_state" DEFAULT 'invited' NOT NULL,
	"invited_by" text,
	"joined_at" timestamp with time zone,
	"ended_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "club_memberships_club_user" UNIQUE("club_id","user_id")
);
--> statement-breakpoint
CREATE TABLE "clubs" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"slug" text NOT NULL,
	"name" text NOT NULL,
	"description" text DEFAULT '' NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "clubs_slug_unique" UNIQUE("slug")
);
--> statement-breakpoint
CREATE TABLE "closures" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"parcel_id" uuid NOT NULL,
	"starts_on" date NOT NULL,
	"ends_on" date NOT NULL,
	"reason" text NOT NULL,
	"created_by" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "closures_order" CHECK ("closures"."ends_on" >= "closures"."starts_on")
);
--> statement-breakpoint
CREATE TABLE "hazards" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"parcel_id" uuid NOT NULL,
	"kind" "hazard_kind" NOT NULL,
	"title" text NOT NULL,
	"detail" text DEFAULT '' NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "no_harvest_zones" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"parcel_id" uuid NOT NULL,
	"name" text NOT NULL,
	"reason" text DEFAULT '' NOT NULL,
	"boundary" geometry(MultiPolygon,4326) NOT NULL,
	"created_by" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "parcels" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"owner_id" text NOT NULL,
	"name" text NOT NULL,
	"description" text DEFAULT '' NOT NULL,
	"status" "parcel_status" DEFAULT 'draft' NOT NULL,
	"boundary" geometry(MultiPolygon,4326) NOT NULL,
	"area_m2" double precision NOT NULL,
	"time_zone" text NOT NULL,
	"nearing_threshold_percent" integer DEFAULT 80 NOT NULL,
	"open_to_requests" boolean DEFAULT false NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "parcels_threshold_range" CHECK ("parcels"."nearing_threshold_percent" between 1 and 100),
	CONSTRAINT "parcels_area_positive" CHECK ("parcels"."area_m2" > 0)
);
--> statement-breakpoint
CREATE TABLE "terms" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"parcel_id" uuid NOT NULL,
	"version" integer NOT NULL,
	"body" text NOT NULL,
	"published_by" text,
	"published_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "terms_parcel_version" UNIQUE("parcel_id","version")
);
--> statement-breakpoint
CREATE TABLE "allowances" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"parcel_id" uuid NOT NULL,
	"species_id" uuid NOT NULL,
	"seasons" jsonb NOT NULL,
	"methods" "method"[] NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "allowances_parcel_species" UNIQUE("parcel_id","species_id")
);
--> statement-breakpoint
CREATE TABLE "limits" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"allowance_id" uuid NOT NULL,
	"permit_id" uuid,
	"scope" "limit_scope" NOT NULL,
	"quantity" numeric(18, 6) NOT NULL,
	"unit" "unit" NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "limits_one_per_scope" UNIQUE NULLS NOT DISTINCT("allowance_id","permit_id","scope"),
	CONSTRAINT "limits_quantity_positive" CHECK ("limits"."quantity" > 0),
	CONSTRAINT "limits_club_needs_permit" CHECK ("limits"."scope" <> 'club-season' or "limits"."permit_id" is not null)
);
--> statement-breakpoint
CREATE TABLE "species" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"slug" text NOT NULL,
	"scientific_name" text NOT NULL,
	"common_name" text NOT NULL,
	"kind" "species_kind" NOT NULL,
	"usual_unit" "unit" NOT NULL,
	"usual_methods" "method"[] DEFAULT '{}'::method[] NOT NULL,
	"cautions" text[] DEFAULT '{}'::text[] NOT NULL,
	"lookalikes" jsonb DEFAULT '[]'::jsonb NOT NULL,
	"protected_status" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "species_slug_unique" UNIQUE("slug")
);
--> statement-breakpoint
CREATE TABLE "permit_events" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"permit_id" uuid NOT NULL,
	"from_state" "permit_state",
	"to_state" "permit_state" NOT NULL,
	"actor_id" text,
	"reason" text DEFAULT '' NOT NULL,
	"at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "permits" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"parcel_id" uuid NOT NULL,
	"holder_user_id" text,
	"holder_club_id" uuid,
	"state" "permit_state" DEFAULT 'requested' NOT NULL,
	"starts_on" date NOT NULL,
	"ends_on" date NOT NULL,
	"fee_minor" integer,
	"currency" text,
	"fee_paid_at" timestamp with time zone,
	"accepted_terms_id" uuid,
	"terms_accepted_at" timestamp with time zone,
	"terms_accepted_by" text,
	"request_note" text DEFAULT '' NOT NULL,
	"requested_by" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "permits_one_holder" CHECK (("permits"."holder_user_id" is null) <> ("permits"."holder_club_id" is null)),
	CONSTRAINT "permits_date_order" CHECK ("permits"."ends_on" >= "permits"."starts_on"),
	CONSTRAINT "permits_fee" CHECK ("permits"."fee_minor" is null or ("permits"."fee_minor" >= 0 and "permits"."currency" is not null))
);
--> statement-breakpoint
CREATE TABLE "check_ins" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"forager_id" text NOT NULL,
	"position" geometry(Point,4326) NOT NULL,
	"accuracy_m" double precision NOT NULL,
	"verdict" "verdict" NOT NULL,
	"parcel_id" uuid,
	"visit_id" uuid,
	"at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "check_ins_accuracy" CHECK ("check_ins"."accuracy_m" >= 0)
);
--> statement-breakpoint
CREATE TABLE "harvest_entries" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"idempotency_key" text NOT NULL,
	"forager_id" text NOT NULL,
	"parcel_id" uuid NOT NULL,
	"permit_id" uuid,
	"visit_id" uuid,
	"species_id" uuid NOT NULL,
	"method" "method" NOT NULL,
	"quantity" numeric(18, 6) NOT NULL,
	"unit" "unit" NOT NULL,
	"dimension" "dimension" NOT NULL,
	"base_quantity" numeric(30, 12) NOT NULL,
	"local_date" date NOT NULL,
	"position" geometry(Point,4326),
	"photo_upload_id" uuid,
	"breach" boolean DEFAULT false NOT NULL,
	"acknowledged_over" boolean DEFAULT false NOT NULL,
	"corrects_entry_id" uuid,
	"correction_reason" text,
	"recorded_by" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "harvest_entries_idempotency_key_unique" UNIQUE("idempotency_key"),
	CONSTRAINT "harvest_entries_correction_reason" CHECK ("harvest_entries"."corrects_entry_id" is null or "harvest_entries"."correction_reason" is not null),
	CONSTRAINT "harvest_entries_positive_unless_correction" CHECK ("harvest_entries"."corrects_entry_id" is not null or "harvest_entries"."quantity" > 0)
);
--> statement-breakpoint
CREATE TABLE "visits" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"forager_id" text NOT NULL,
	"parcel_id" uuid NOT NULL,
	"permit_id" uuid,
	"local_date" date NOT NULL,
	"started_at" timestamp with time zone DEFAULT now() NOT NULL,
	"ended_at" timestamp with time zone,
	"ended_by" "visit_end"
);
--> statement-breakpoint
CREATE TABLE "audit_events" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"actor_id" text,
	"action" text NOT NULL,
	"subject_type" text NOT NULL,
	"subject_id" text NOT NULL,
	"detail" jsonb DEFAULT '{}'::jsonb NOT NULL,
	"at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "outgoing_mail" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"purpose" text NOT NULL,
	"to_address" text NOT NULL,
	"subject" text NOT NULL,
	"client_address" text,
	"state" "mail_state" DEFAULT 'queued' NOT NULL,
	"error" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"sent_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "payment_events" (
	"provider_event_id" text PRIMARY KEY NOT NULL,
	"type" text NOT NULL,
	"payload" jsonb NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "payments" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"permit_id" uuid NOT NULL,
	"payer_id" text NOT NULL,
	"provider" text DEFAULT 'stripe' NOT NULL,
	"provider_session_id" text,
	"provider_payment_id" text,
	"amount_minor" integer NOT NULL,
	"currency" text NOT NULL,
	"state" "payment_state" DEFAULT 'pending' NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"paid_at" timestamp with time zone,
	"refunded_at" timestamp with time zone,
	CONSTRAINT "payments_provider_session_id_unique" UNIQUE("provider_session_id"),
	CONSTRAINT "payments_amount" CHECK ("payments"."amount_minor" >= 0)
);
--> statement-breakpoint
CREATE TABLE "uploads" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"owner_id" text NOT NULL,
	"purpose" "upload_purpose" NOT NULL,
	"storage_key" text NOT NULL,
	"content_type" text NOT NULL,
	"byte_size" integer NOT NULL,
	"sha256" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "uploads_storage_key_unique" UNIQUE("storage_key"),
	CONSTRAINT "uploads_size" CHECK ("uploads"."byte_size" >= 0)
);
--> statement-breakpoint
ALTER TABLE "accounts" ADD CONSTRAINT "accounts_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sessions" ADD CONSTRAINT "sessions_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "club_memberships" ADD CONSTRAINT "club_memberships_club_id_clubs_id_fk" FOREIGN KEY ("club_id") REFERENCES "public"."clubs"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "club_memberships" ADD CONSTRAINT "club_memberships_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "club_memberships" ADD CONSTRAINT "club_memberships_invited_by_users_id_fk" FOREIGN KEY ("invited_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "closures" ADD CONSTRAINT "closures_parcel_id_parcels_id_fk" FOREIGN KEY ("parcel_id") REFERENCES "public"."parcels"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "closures" ADD CONSTRAINT "closures_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "hazards" ADD CONSTRAINT "hazards_parcel_id_parcels_id_fk" FOREIGN KEY ("parcel_id") REFERENCES "public"."parcels"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "no_harvest_zones" ADD CONSTRAINT "no_harvest_zones_parcel_id_parcels_id_fk" FOREIGN KEY ("parcel_id") REFERENCES "public"."parcels"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "no_harvest_zones" ADD CONSTRAINT "no_harvest_zones_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "parcels" ADD CONSTRAINT "parcels_owner_id_users_id_fk" FOREIGN KEY ("owner_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "terms" ADD CONSTRAINT "terms_parcel_id_parcels_id_fk" FOREIGN KEY ("parcel_id") REFERENCES "public"."parcels"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "terms" ADD CONSTRAINT "terms_published_by_users_id_fk" FOREIGN KEY ("published_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "allowances" ADD CONSTRAINT "allowances_parcel_id_parcels_id_fk" FOREIGN KEY ("parcel_id") REFERENCES "public"."parcels"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "allowances" ADD CONSTRAINT "allowances_species_id_species_id_fk" FOREIGN KEY ("species_id") REFERENCES "public"."species"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "limits" ADD CONSTRAINT "limits_allowance_id_allowances_id_fk" FOREIGN KEY ("allowance_id") REFERENCES "public"."allowances"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "limits" ADD CONSTRAINT "limits_permit_id_permits_id_fk" FOREIGN KEY ("permit_id") REFERENCES "public"."permits"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "permit_events" ADD CONSTRAINT "permit_events_permit_id_permits_id_fk" FOREIGN KEY ("permit_id") REFERENCES "public"."permits"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "permit_events" ADD CONSTRAINT "permit_events_actor_id_users_id_fk" FOREIGN KEY ("actor_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "permits" ADD CONSTRAINT "permits_parcel_id_parcels_id_fk" FOREIGN KEY ("parcel_id") REFERENCES "public"."parcels"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "permits" ADD CONSTRAINT "permits_holder_user_id_users_id_fk" FOREIGN KEY ("holder_user_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "permits" ADD CONSTRAINT "permits_holder_club_id_clubs_id_fk" FOREIGN KEY ("holder_club_id") REFERENCES "public"."clubs"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "permits" ADD CONSTRAINT "permits_accepted_terms_id_terms_id_fk" FOREIGN KEY ("accepted_terms_id") REFERENCES "public"."terms"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "permits" ADD CONSTRAINT "permits_terms_accepted_by_users_id_fk" FOREIGN KEY ("terms_accepted_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "permits" ADD CONSTRAINT "permits_requested_by_users_id_fk" FOREIGN KEY ("requested_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "check_ins" ADD CONSTRAINT "check_ins_forager_id_users_id_fk" FOREIGN KEY ("forager_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "check_ins" ADD CONSTRAINT "check_ins_parcel_id_parcels_id_fk" FOREIGN KEY ("parcel_id") REFERENCES "public"."parcels"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "check_ins" ADD CONSTRAINT "check_ins_visit_id_visits_id_fk" FOREIGN KEY ("visit_id") REFERENCES "public"."visits"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "harvest_entries" ADD CONSTRAINT "harvest_entries_forager_id_users_id_fk" FOREIGN KEY ("forager_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "harvest_entries" ADD CONSTRAINT "harvest_entries_parcel_id_parcels_id_fk" FOREIGN KEY ("parcel_id") REFERENCES "public"."parcels"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "harvest_entries" ADD CONSTRAINT "harvest_entries_permit_id_permits_id_fk" FOREIGN KEY ("permit_id") REFERENCES "public"."permits"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "harvest_entries" ADD CONSTRAINT "harvest_entries_visit_id_visits_id_fk" FOREIGN KEY ("visit_id") REFERENCES "public"."visits"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "harvest_entries" ADD CONSTRAINT "harvest_entries_species_id_species_id_fk" FOREIGN KEY ("species_id") REFERENCES "public"."species"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "harvest_entries" ADD CONSTRAINT "harvest_entries_photo_upload_id_uploads_id_fk" FOREIGN KEY ("photo_upload_id") REFERENCES "public"."uploads"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "harvest_entries" ADD CONSTRAINT "harvest_entries_corrects_entry_id_harvest_entries_id_fk" FOREIGN KEY ("corrects_entry_id") REFERENCES "public"."harvest_entries"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "harvest_entries" ADD CONSTRAINT "harvest_entries_recorded_by_users_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "visits" ADD CONSTRAINT "visits_forager_id_users_id_fk" FOREIGN KEY ("forager_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "visits" ADD CONSTRAINT "visits_parcel_id_parcels_id_fk" FOREIGN KEY ("parcel_id") REFERENCES "public"."parcels"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "visits" ADD CONSTRAINT "visits_permit_id_permits_id_fk" FOREIGN KEY ("permit_id") REFERENCES "public"."permits"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "audit_events" ADD CONSTRAINT "audit_events_actor_id_users_id_fk" FOREIGN KEY ("actor_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "payments" ADD CONSTRAINT "payments_permit_id_permits_id_fk" FOREIGN KEY ("permit_id") REFERENCES "public"."permits"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "payments" ADD CONSTRAINT "payments_payer_id_users_id_fk" FOREIGN KEY ("payer_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "uploads" ADD CONSTRAINT "uploads_owner_id_users_id_fk" FOREIGN KEY ("owner_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "club_memberships_user" ON "club_memberships" USING btree ("user_id");--> statement-breakpoint
CREATE INDEX "closures_parcel" ON "closures" USING btree ("parcel_id");--> statement-breakpoint
CREATE INDEX "hazards_parcel" ON "hazards" USING btree ("parcel_id");--> statement-breakpoint
CREATE INDEX "no_harvest_zones_parcel" ON "no_harvest_zones" USING btree ("parcel_id");--> statement-breakpoint
CREATE INDEX "no_harvest_zones_boundary_gist" ON "no_harvest_zones" USING gist ("boundary");--> statement-breakpoint
CREATE INDEX "parcels_owner" ON "parcels" USING btree ("owner_id");--> statement-breakpoint
CREATE INDEX "parcels_boundary_gist" ON "parcels" USING gist ("boundary");--> statement-breakpoint
CREATE INDEX "parcels_boundary_geog_gist" ON "parcels" USING gist (("boundary"::geography));--> statement-breakpoint
CREATE INDEX "limits_permit" ON "limits" USING btree ("permit_id");--> statement-breakpoint
CREATE INDEX "permit_events_permit" ON "permit_events" USING btree ("permit_id","at");--> statement-breakpoint
CREATE INDEX "permits_parcel" ON "permits" USING btree ("parcel_id");--> statement-breakpoint
CREATE INDEX "permits_holder_user" ON "permits" USING btree ("holder_user_id");--> statement-breakpoint
CREATE INDEX "permits_holder_club" ON "permits" USING btree ("holder_club_id");--> statement-breakpoint
CREATE INDEX "check_ins_forager" ON "check_ins" USING btree ("forager_id","at");--> statement-breakpoint
CREATE INDEX "harvest_entries_parcel_species" ON "harvest_entries" USING btree ("parcel_id","species_id","local_date");--> statement-breakpoint
CREATE INDEX "harvest_entries_forager" ON "harvest_entries" USING btree ("forager_id","created_at");--> statement-breakpoint
CREATE INDEX "harvest_entries_permit" ON "harvest_entries" USING btree ("permit_id");--> statement-breakpoint
CREATE INDEX "visits_forager" ON "visits" USING btree ("forager_id","started_at");--> statement-breakpoint
CREATE INDEX "visits_parcel" ON "visits" USING btree ("parcel_id","local_date");--> statement-breakpoint
CREATE INDEX "audit_events_subject" ON "audit_events" USING btree ("subject_type","subject_id","at");--> statement-breakpoint
CREATE INDEX "outgoing_mail_to" ON "outgoing_mail" USING btree ("purpose","to_address","created_at");--> statement-breakpoint
CREATE INDEX "outgoing_mail_client" ON "outgoing_mail" USING btree ("purpose","client_address","created_at");--> statement-breakpoint
CREATE INDEX "payments_permit" ON "payments" USING btree ("permit_id");--> statement-breakpoint
CREATE INDEX "uploads_owner" ON "uploads" USING btree ("owner_id");