export { sequelize, isSqlite } from "./connection";
export { migrate } from "./migrate";
export { User } from "./models/user";
export { Session } from "./models/session";
export { AuthToken } from "./models/auth-token";
export { CapturedMail, MailLog } from "./models/captured-mail";
export { LabSetting } from "./models/lab-setting";
export { ApiToken } from "./models/api-token";
