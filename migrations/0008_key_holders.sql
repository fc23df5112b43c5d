-- The person a key belongs to. One person may hold several keys (a technician's and an approver's); the two-person rule
-- for budget approval compares holders, not key names. Null means the key's name is its holder.
ALTER TABLE api_keys ADD COLUMN holder TEXT NULL;
