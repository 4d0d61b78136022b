-- Whether a calendar feed names the people whose personal factors fall due. A feed is read by
-- whoever holds its token (a shared calendar, a phone), so names are left out unless the
-- manager creating it asks for them. Feeds made before this column keep showing names, as
-- their subscribers have seen so far; new ones default to none. Set once, at creation.
ALTER TABLE calendar_feeds ADD COLUMN show_people BOOLEAN NOT NULL DEFAULT true;
ALTER TABLE calendar_feeds ALTER COLUMN show_people SET DEFAULT false;
