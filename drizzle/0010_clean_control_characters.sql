-- Names people type are one line from now on (shared/schemas/text.ts): control characters saved
-- before are turned into spaces. Preset and recipe names stay unique (a clash gets its id's start).
with c as (
  select id, coalesce(nullif(btrim(regexp_replace(name, '[\x01-\x1f\x7f-\x9f]', ' ', 'g')), ''), 'unnamed preset') as clean, name ~ '[\x01-\x1f\x7f-\x9f]' as dirty from presets
)
update presets t set name = c.clean || case when (select count(*) from c c2 where lower(c2.clean) = lower(c.clean)) > 1 then ' (' || left(t.id::text, 8) || ')' else '' end
from c where c.id = t.id and c.dirty;
--> statement-breakpoint
update preset_versions v set settings = jsonb_set(v.settings, '{name}', to_jsonb(p.name)) from presets p where p.id = v.preset_id and v.settings->>'name' ~ '[\x01-\x1f\x7f-\x9f]';
--> statement-breakpoint
with c as (
  select id, coalesce(nullif(btrim(regexp_replace(name, '[\x01-\x1f\x7f-\x9f]', ' ', 'g')), ''), 'unnamed recipe') as clean, name ~ '[\x01-\x1f\x7f-\x9f]' as dirty from recipes
)
update recipes t set name = c.clean || case when (select count(*) from c c2 where lower(c2.clean) = lower(c.clean)) > 1 then ' (' || left(t.id::text, 8) || ')' else '' end
from c where c.id = t.id and c.dirty;
--> statement-breakpoint
update intakes set name = coalesce(nullif(btrim(regexp_replace(name, '[\x01-\x1f\x7f-\x9f]', ' ', 'g')), ''), 'unnamed intake') where name ~ '[\x01-\x1f\x7f-\x9f]';
--> statement-breakpoint
update users set name = coalesce(nullif(btrim(regexp_replace(name, '[\x01-\x1f\x7f-\x9f]', ' ', 'g')), ''), 'unnamed') where name ~ '[\x01-\x1f\x7f-\x9f]';
--> statement-breakpoint
update batches set name = coalesce(nullif(btrim(regexp_replace(name, '[\x01-\x1f\x7f-\x9f]', ' ', 'g')), ''), 'unnamed batch') where name ~ '[\x01-\x1f\x7f-\x9f]';
--> statement-breakpoint
update fragments set title = coalesce(nullif(btrim(regexp_replace(title, '[\x01-\x1f\x7f-\x9f]', ' ', 'g')), ''), null) where title ~ '[\x01-\x1f\x7f-\x9f]';
