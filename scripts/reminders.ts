// Sends the visit reminders that are due (npm run reminders, for an external scheduler; npm start runs it hourly).
import { runReminders } from '../lib/reminders';
import { sequelize } from '../models';

runReminders()
  .then(async (r) => {
    console.log(`[excursion] reminders: ${r.sent} sent, ${r.skipped} already sent before`);
    await sequelize.close();
  })
  .catch((e) => {
    console.error(e);
    process.exit(1);
  });
